/**
 * Nonlinear least squares by Levenberg-Marquardt with Marquardt (Moré) scaling, Nielsen's damping
 * update and optional geodesic acceleration.
 *
 * Minimises S(b) = sum_i (y_i - f_i(b))^2. Each iteration solves the damped linear problem
 *   min || [J; sqrt(lambda) D] v + [e; 0] ||,   e = f(b) - y,  J = df/db,
 * by Householder QR (never forming J'J), with D = diag(max over iterations of ||column j of J||)
 * (Moré 1978, so the damping is invariant to the units of the parameters). With geodesic
 * acceleration (Transtrum & Sethna 2012) a second-order correction a, solving the same damped
 * problem for the directional second derivative of the residuals along v (estimated by a finite
 * difference with h = 0.1), is added: step = v + a/2, accepted only when 2||Da||/||Dv|| <= 0.75.
 * The damping lambda follows Nielsen (1999): after an accepted step with gain ratio rho,
 * lambda *= max(1/3, 1 - (2 rho - 1)^3); after a rejected one lambda *= nu, nu *= 2.
 *
 * Convergence (first that holds): (1) gradient: max_j |J_j'e| / (||J_j|| ||e||) <= gradientTolerance
 * (1e-12; the cosine between each Jacobian column and the residuals); (2) step: an accepted step with
 * gain ratio > 0.25 and ||D step|| <= stepTolerance (||D b|| + stepTolerance) (1e-10); (3) reduction:
 * both the actual and the predicted relative reductions of S are <= 1e-15; (4) stationary: no
 * downhill step exists at any damping (lambda > 1e16) and the undamped Gauss-Newton step predicts
 * a relative reduction ||Q1'e||^2/||e||^2 <= 1e-12, i.e. S is at its minimum to working precision
 * (the usual end on ill-conditioned problems, where rounding hides further progress); (5) zero
 * residuals. Otherwise, after maxIterations, or when no downhill step exists but Gauss-Newton still
 * predicts progress, the last iterate is returned with converged = false and a warning
 * "did not converge after N iterations: ...". After convergence up to 5 undamped Gauss-Newton
 * steps polish the estimate (accepted while S does not rise beyond rounding), because near the
 * minimum S changes by less than its own rounding error and cannot confirm the last digits of b.
 *
 * References: K. Levenberg (1944), Quart. Appl. Math. 2, 164-168; D. W. Marquardt (1963), J. SIAM
 * 11(2), 431-441; J. J. Moré (1978), "The Levenberg-Marquardt algorithm: implementation and
 * theory", in G. A. Watson (ed.), Numerical Analysis, Springer LNM 630, 105-116; H. B. Nielsen (1999), "Damping parameter in
 * Marquardt's method", IMM-REP-1999-05, DTU; M. K. Transtrum and J. P. Sethna (2012), "Improvements
 * to the Levenberg-Marquardt algorithm for nonlinear least-squares minimization", arXiv:1201.5885.
 */
import { type Matrix, createMatrix } from "./linalg";
import type { EstimationWarning, LeastSquaresFit } from "./ols";
import { DEFAULT_RANK_TOLERANCE, applyQTranspose, householderQr, leastSquaresSolve, unscaledCovariance } from "./qr";

/** A nonlinear regression model y_i = f_i(b) + error. */
export interface NonlinearModel {
  /** Observed y (length n), kept by reference in the fit. */
  readonly response: Float64Array;
  /** Parameter names (default b1, b2, ...). */
  readonly names?: readonly string[];
  /** Write the fitted values f_i(b), i < n, into `out`. Must not keep or modify `parameters`. */
  readonly predict: (parameters: Float64Array, out: Float64Array) => void;
  /**
   * Optional analytic Jacobian: write df_i/db_j into `out`, n x p column-major (entry (i, j) at
   * out[i + j*n]). Without it, finite differences are used (see NlsOptions.derivative).
   */
  readonly jacobian?: (parameters: Float64Array, out: Float64Array) => void;
}

export interface NlsOptions {
  /** Maximum iterations (damped linear solves), default 1000. */
  readonly maxIterations?: number;
  /** Finite differences when the model has no Jacobian: "central" (default; error ~eps^(2/3)) or "forward" (~eps^(1/2)). */
  readonly derivative?: "central" | "forward";
  /** Geodesic acceleration (Transtrum & Sethna 2012), default true. */
  readonly geodesicAcceleration?: boolean;
  /** Initial damping relative to D^2, default 1e-3. */
  readonly initialDamping?: number;
  /** Relative step tolerance, default 1e-10. */
  readonly stepTolerance?: number;
  /** Gradient (cosine) tolerance, default 1e-12. */
  readonly gradientTolerance?: number;
  /** Rank tolerance for the QR of the final Jacobian (default 1e-11, see qr.ts). */
  readonly rankTolerance?: number;
}

/** Result of `nls`: the LeastSquaresFit shape (design = Jacobian at the solution) plus the iteration record. */
export interface NonlinearFit extends LeastSquaresFit {
  readonly kind: "nls";
  /** Whether one of the convergence tests held. */
  readonly converged: boolean;
  /** Iterations (damped linear solves) taken. */
  readonly iterations: number;
  /** Evaluations of `predict` (finite-difference evaluations included). */
  readonly evaluations: number;
  /** Which test stopped the iteration, in words. */
  readonly termination: string;
  /** The starting values (copied). */
  readonly start: Float64Array;
}

function defaultNames(p: number): string[] {
  return Array.from({ length: p }, (_, j) => `b${j + 1}`);
}

const EPS = 2.220446049250313e-16;
/** Stall test: S counts as minimal when Gauss-Newton predicts a relative reduction below this. */
const STALL_REDUCTION_TOLERANCE = 1e-12;

/**
 * Nonlinear least squares by Levenberg-Marquardt (see the module comment for the algorithm and the
 * convergence tests).
 *
 * Returns the same shape as `ols` where it makes sense: coefficients, residuals (y - f), fitted,
 * sigma = sqrt(S/(n - p)), residualDegreesOfFreedom = n - p, bread = (J'J)^-1 at the solution
 * (from the QR of J), design = J; plus converged, iterations, evaluations and termination. When it
 * does not converge the last iterate is returned with a "no-convergence" warning
 * "did not converge after N iterations: <reason>".
 *
 * Throws RangeError when the start has the wrong length or is not finite, the model is not finite
 * at the start, n < p, or an option is out of range.
 * Example: fitting y = b1 (1 - exp(-b2 x)) to NIST Misra1a from b = (500, 1e-4) gives
 * b1 = 238.94212918, b2 = 5.5015643181e-4 (NIST certified values, 11 digits).
 * Reference: see the module comment (Moré 1978; Nielsen 1999; Transtrum & Sethna 2012).
 */
export function nls(model: NonlinearModel, start: ArrayLike<number>, options: NlsOptions = {}): NonlinearFit {
  const y = model.response;
  const n = y.length;
  const p = start.length;
  const names = Object.freeze([...(model.names ?? defaultNames(p))]);
  if (names.length !== p) throw new RangeError(`model has ${names.length} parameter names but the start has ${p} values`);
  if (p === 0) throw new RangeError("the start has no parameters");
  if (n < p) throw new RangeError(`${n} observations cannot identify ${p} parameters`);
  for (let j = 0; j < p; j++) if (!Number.isFinite(start[j])) throw new RangeError(`start value ${names[j]} is not finite: ${start[j]}`);
  for (let i = 0; i < n; i++) if (!Number.isFinite(y[i])) throw new RangeError(`y[${i}] is not finite: ${y[i]}`);
  const maxIterations = options.maxIterations ?? 1000;
  if (!(Number.isInteger(maxIterations) && maxIterations >= 0)) throw new RangeError(`maxIterations must be a non-negative integer, got ${maxIterations}`);
  const derivative = options.derivative ?? "central";
  if (derivative !== "central" && derivative !== "forward") throw new RangeError(`derivative must be "central" or "forward", got "${String(derivative)}"`);
  const useAcceleration = options.geodesicAcceleration ?? true;
  const stepTolerance = options.stepTolerance ?? 1e-10;
  const gradientTolerance = options.gradientTolerance ?? 1e-12;
  let lambda = options.initialDamping ?? 1e-3;
  if (!(lambda > 0)) throw new RangeError(`initialDamping must be positive, got ${lambda}`);

  let evaluations = 0;
  const evaluate = (b: Float64Array, out: Float64Array): number => {
    model.predict(b, out);
    evaluations++;
    let s = 0;
    for (let i = 0; i < n; i++) {
      const e = out[i] - y[i];
      s += e * e;
    }
    return Number.isFinite(s) ? s : Number.POSITIVE_INFINITY;
  };

  const fdA = new Float64Array(n);
  const fdB = new Float64Array(n);
  const bump = new Float64Array(p);
  const computeJacobian = (b: Float64Array, fAtB: Float64Array, out: Float64Array): void => {
    if (model.jacobian) {
      model.jacobian(b, out);
      return;
    }
    bump.set(b);
    const rel = derivative === "central" ? Math.cbrt(EPS) : Math.sqrt(EPS);
    for (let j = 0; j < p; j++) {
      const bj = b[j];
      let h = rel * (bj !== 0 ? Math.abs(bj) : 1);
      const up = bj + h;
      h = up - bj; // exactly representable step
      bump[j] = up;
      model.predict(bump, fdA);
      evaluations++;
      if (derivative === "central") {
        bump[j] = bj - h;
        model.predict(bump, fdB);
        evaluations++;
        for (let i = 0; i < n; i++) out[i + j * n] = (fdA[i] - fdB[i]) / (2 * h);
      } else {
        for (let i = 0; i < n; i++) out[i + j * n] = (fdA[i] - fAtB[i]) / h;
      }
      bump[j] = bj;
    }
  };

  const beta = Float64Array.from(start);
  const fitted = new Float64Array(n);
  let cost = evaluate(beta, fitted);
  if (!Number.isFinite(cost)) throw new RangeError("the model is not finite at the starting values");
  const e = new Float64Array(n);
  const updateResiduals = (): void => {
    for (let i = 0; i < n; i++) e[i] = fitted[i] - y[i];
  };
  updateResiduals();
  let jac = new Float64Array(n * p);
  computeJacobian(beta, fitted, jac);
  const scaleD = new Float64Array(p);
  const columnNorms = new Float64Array(p);
  const updateScale = (): void => {
    for (let j = 0; j < p; j++) {
      let s = 0;
      for (let i = 0; i < n; i++) s += jac[i + j * n] * jac[i + j * n];
      columnNorms[j] = Math.sqrt(s);
      scaleD[j] = Math.max(scaleD[j], columnNorms[j]);
    }
    for (let j = 0; j < p; j++) if (!(scaleD[j] > 0)) scaleD[j] = 1;
  };
  updateScale();

  // Damped solve: v = argmin ||[J; sqrt(lambda) D] v + [rhs; 0]||.
  const augmentedData = new Float64Array((n + p) * p);
  const augmentedRhs = new Float64Array(n + p);
  const dampedSolve = (rhs: Float64Array, out: Float64Array): boolean => {
    augmentedData.fill(0);
    const m = n + p;
    const root = Math.sqrt(lambda);
    for (let j = 0; j < p; j++) {
      for (let i = 0; i < n; i++) augmentedData[i + j * m] = jac[i + j * n];
      augmentedData[n + j + j * m] = root * scaleD[j];
    }
    for (let i = 0; i < n; i++) augmentedRhs[i] = -rhs[i];
    augmentedRhs.fill(0, n);
    for (let i = 0; i < augmentedData.length; i++) if (!Number.isFinite(augmentedData[i])) return false;
    const a = createMatrix(m, p, augmentedData);
    const qr = householderQr(a, { tolerance: 0 });
    if (qr.rank < p) return false;
    const solution = leastSquaresSolve(qr, a, augmentedRhs, 0).coefficients;
    out.set(solution);
    for (let j = 0; j < p; j++) if (!Number.isFinite(out[j])) return false;
    return true;
  };

  const v = new Float64Array(p);
  const acc = new Float64Array(p);
  const step = new Float64Array(p);
  const trial = new Float64Array(p);
  const trialFitted = new Float64Array(n);
  const probeFitted = new Float64Array(n);
  const secondDerivative = new Float64Array(n);
  const jv = new Float64Array(n);
  let nu = 2;
  let iterations = 0;
  let converged = false;
  let termination = "";

  const gradientCosine = (): number => {
    let enorm = 0;
    for (let i = 0; i < n; i++) enorm += e[i] * e[i];
    enorm = Math.sqrt(enorm);
    if (enorm === 0) return 0;
    let worst = 0;
    for (let j = 0; j < p; j++) {
      if (columnNorms[j] === 0) continue;
      let s = 0;
      for (let i = 0; i < n; i++) s += jac[i + j * n] * e[i];
      worst = Math.max(worst, Math.abs(s) / (columnNorms[j] * enorm));
    }
    return worst;
  };
  // ||Q1'e||^2 / ||e||^2: the relative reduction of S predicted by the undamped Gauss-Newton step.
  const gaussNewtonRelativeReduction = (): number => {
    const qr = householderQr(createMatrix(n, p, jac), { tolerance: 0 });
    const qte = applyQTranspose(qr, e);
    let projected = 0;
    for (let j = 0; j < qr.rank; j++) projected += qte[j] * qte[j];
    return projected / cost;
  };
  const weightedNorm = (x: Float64Array): number => {
    let s = 0;
    for (let j = 0; j < p; j++) s += (scaleD[j] * x[j]) ** 2;
    return Math.sqrt(s);
  };

  while (true) {
    if (cost === 0) {
      converged = true;
      termination = "zero residuals";
      break;
    }
    const cosine = gradientCosine();
    if (cosine <= gradientTolerance) {
      converged = true;
      termination = `gradient: largest cosine between a Jacobian column and the residuals ${cosine.toExponential(2)} <= ${gradientTolerance}`;
      break;
    }
    if (iterations >= maxIterations) {
      termination = `iteration limit reached (largest gradient cosine ${cosine.toExponential(2)}, S = ${cost.toExponential(6)})`;
      break;
    }
    if (lambda > 1e16) {
      // No downhill step at any damping: either S is at its minimum to working precision (the
      // undamped Gauss-Newton step predicts a negligible relative reduction) or we are stuck.
      const gaussNewtonReduction = gaussNewtonRelativeReduction();
      if (gaussNewtonReduction <= STALL_REDUCTION_TOLERANCE) {
        converged = true;
        termination =
          `stationary: no downhill step at working precision and the Gauss-Newton step predicts a relative reduction of S of ` +
          `${gaussNewtonReduction.toExponential(2)} <= ${STALL_REDUCTION_TOLERANCE}`;
      } else {
        termination = `no downhill step found (Gauss-Newton predicts a relative reduction ${gaussNewtonReduction.toExponential(2)}; S = ${cost.toExponential(6)})`;
      }
      break;
    }
    iterations++;
    if (!dampedSolve(e, v)) {
      lambda *= nu;
      nu *= 2;
      continue;
    }
    // Predicted reduction of the linear model for v: ||e||^2 - ||e + Jv||^2.
    jv.fill(0);
    for (let j = 0; j < p; j++) for (let i = 0; i < n; i++) jv[i] += jac[i + j * n] * v[j];
    let linearCost = 0;
    for (let i = 0; i < n; i++) linearCost += (e[i] + jv[i]) ** 2;
    const predicted = cost - linearCost;

    step.set(v);
    let accelerationRejected = false;
    if (useAcceleration) {
      const h = 0.1;
      for (let j = 0; j < p; j++) trial[j] = beta[j] + h * v[j];
      model.predict(trial, probeFitted);
      evaluations++;
      let finite = true;
      for (let i = 0; i < n; i++) {
        const d = (2 / h) * ((probeFitted[i] - fitted[i]) / h - jv[i]);
        if (!Number.isFinite(d)) finite = false;
        secondDerivative[i] = d;
      }
      if (finite && dampedSolve(secondDerivative, acc)) {
        if (2 * weightedNorm(acc) <= 0.75 * weightedNorm(v)) {
          for (let j = 0; j < p; j++) step[j] += 0.5 * acc[j];
        } else {
          accelerationRejected = true;
        }
      }
    }
    if (accelerationRejected) {
      lambda *= nu;
      nu *= 2;
      continue;
    }
    for (let j = 0; j < p; j++) trial[j] = beta[j] + step[j];
    const trialCost = evaluate(trial, trialFitted);
    const rho = predicted > 0 ? (cost - trialCost) / predicted : -1;
    if (trialCost < cost && rho > 0) {
      const previousCost = cost;
      const stepNorm = weightedNorm(step);
      beta.set(trial);
      fitted.set(trialFitted);
      cost = trialCost;
      updateResiduals();
      computeJacobian(beta, fitted, jac);
      updateScale();
      lambda *= Math.max(1 / 3, 1 - (2 * rho - 1) ** 3);
      nu = 2;
      if (rho > 0.25 && stepNorm <= stepTolerance * (weightedNorm(beta) + stepTolerance)) {
        converged = true;
        termination = `step: relative step ${(stepNorm / (weightedNorm(beta) || 1)).toExponential(2)} <= ${stepTolerance}`;
        break;
      }
      if ((previousCost - cost) / previousCost <= 1e-15 && predicted / previousCost <= 1e-15) {
        converged = true;
        termination = "reduction: the sum of squares cannot be reduced further at working precision";
        break;
      }
    } else {
      lambda *= nu;
      nu *= 2;
    }
  }

  // Polish: near the minimum the sum of squares changes by less than its own rounding error, so a
  // cost-based test cannot see the last digits of b. Take up to 5 undamped Gauss-Newton steps,
  // accepted while S does not rise beyond rounding (S_new <= S (1 + 1e-13)) and the step shrinks.
  if (converged && cost > 0) {
    let previousStep = Number.POSITIVE_INFINITY;
    for (let polish = 0; polish < 5; polish++) {
      const qr = householderQr(createMatrix(n, p, jac), { tolerance: 0 });
      if (qr.rank < p) break;
      const negative = new Float64Array(n);
      for (let i = 0; i < n; i++) negative[i] = -e[i];
      const gn = leastSquaresSolve(qr, createMatrix(n, p, jac), negative, 0).coefficients;
      const gnNorm = weightedNorm(gn);
      if (!(gnNorm < previousStep) || !Number.isFinite(gnNorm)) break;
      previousStep = gnNorm;
      for (let j = 0; j < p; j++) trial[j] = beta[j] + gn[j];
      const trialCost = evaluate(trial, trialFitted);
      if (!(trialCost <= cost * (1 + 1e-13))) break;
      beta.set(trial);
      fitted.set(trialFitted);
      cost = trialCost;
      updateResiduals();
      computeJacobian(beta, fitted, jac);
      if (gnNorm <= 1e-15 * weightedNorm(beta)) break;
    }
  }

  const residuals = new Float64Array(n);
  for (let i = 0; i < n; i++) residuals[i] = y[i] - fitted[i];
  const design: Matrix = createMatrix(n, p, jac);
  const warnings: EstimationWarning[] = [];
  if (!converged) {
    warnings.push({ code: "no-convergence", message: `did not converge after ${iterations} iterations: ${termination}` });
  }
  let bread: Matrix;
  let rank = p;
  let aliased: readonly boolean[] = Object.freeze(new Array<boolean>(p).fill(false));
  let finiteJacobian = true;
  for (let i = 0; i < jac.length; i++) if (!Number.isFinite(jac[i])) finiteJacobian = false;
  if (finiteJacobian) {
    const qr = householderQr(design, { tolerance: options.rankTolerance ?? DEFAULT_RANK_TOLERANCE });
    bread = unscaledCovariance(qr);
    rank = qr.rank;
    aliased = qr.aliased;
    if (rank < p) {
      const aliasedNames = names.filter((_, j) => qr.aliased[j]);
      warnings.push({
        code: "rank-deficient",
        message: `the Jacobian at the estimate has rank ${rank} < ${p}: ${aliasedNames.join(", ")} not identified (standard errors NaN)`,
      });
    }
  } else {
    bread = createMatrix(p, p, new Float64Array(p * p).fill(Number.NaN));
  }
  const dof = n - p;
  const sigma = dof > 0 ? Math.sqrt(cost / dof) : Number.NaN;
  if (dof <= 0) {
    warnings.push({
      code: "no-residual-degrees-of-freedom",
      message: `${n} observations for ${p} parameters: no residual degrees of freedom, sigma and standard errors are undefined`,
    });
  }
  return Object.freeze({
    kind: "nls" as const,
    coefficients: beta,
    names,
    residuals,
    fitted,
    design,
    response: y,
    bread,
    rank,
    aliased,
    observations: n,
    residualDegreesOfFreedom: dof,
    residualSumOfSquares: cost,
    sigma,
    converged,
    iterations,
    evaluations,
    termination,
    start: Float64Array.from(start),
    warnings: Object.freeze(warnings),
  });
}
