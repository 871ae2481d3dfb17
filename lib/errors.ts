/**
 * One application error type with a fixed set of codes, each mapped to an HTTP status.
 * Route handlers and server actions catch AppError and answer with its status and message;
 * anything else is logged with context and shown to the user as a plain sentence.
 */
export const APP_ERROR_STATUS = {
  BAD_REQUEST: 400,
  UNAUTHENTICATED: 401,
  FORBIDDEN: 403,
  NOT_FOUND: 404,
  CONFLICT: 409,
  VALIDATION: 422,
  RATE_LIMITED: 429,
  UPSTREAM: 502,
  UNAVAILABLE: 503,
  INTERNAL: 500,
} as const;

export type AppErrorCode = keyof typeof APP_ERROR_STATUS;

export class AppError extends Error {
  readonly code: AppErrorCode;
  /** Extra facts for the response body, e.g. { field: "economy" }. Never secrets. */
  readonly details?: Readonly<Record<string, unknown>>;

  constructor(code: AppErrorCode, message: string, details?: Record<string, unknown>, options?: { cause?: unknown }) {
    super(message, options);
    this.name = "AppError";
    this.code = code;
    this.details = details;
  }

  get status(): number {
    return APP_ERROR_STATUS[this.code];
  }
}

export function isAppError(e: unknown): e is AppError {
  return e instanceof AppError;
}
