/**
 * Route handler plumbing: parse input with zod, map errors to HTTP answers. Known errors answer
 * with their status and one sentence; anything else is logged with context and answered with a
 * plain sentence (no stack traces to the client).
 */
import { NextResponse } from "next/server";
import { z } from "zod";
import { AppError, isAppError } from "../errors";

/** JSON with BigInt values converted to numbers or strings (Response.json fails on BigInt). */
export function json(body: unknown, init?: ResponseInit): NextResponse {
  const text = JSON.stringify(body, (_k, v) => (typeof v === "bigint" ? (Number.isSafeInteger(Number(v)) ? Number(v) : v.toString()) : v));
  return new NextResponse(text, { ...init, headers: { "content-type": "application/json; charset=utf-8", ...(init?.headers ?? {}) } });
}

/** Validate `input` against `schema`; a failure is a 422 naming the first field. */
export function parseInput<T extends z.ZodType>(schema: T, input: unknown, where = "request"): z.infer<T> {
  const r = schema.safeParse(input);
  if (!r.success) {
    const issue = r.error.issues[0]!;
    const field = issue.path.join(".") || where;
    throw new AppError("VALIDATION", `${field}: ${issue.message}`, { field, issues: r.error.issues.map((i) => ({ field: i.path.join("."), message: i.message })) });
  }
  return r.data;
}

/** Query parameters as a plain object (last value wins). */
export function queryObject(req: Request): Record<string, string> {
  return Object.fromEntries(new URL(req.url).searchParams.entries());
}

/** Run a handler body and turn errors into answers. */
export async function handle(context: string, fn: () => Promise<Response>): Promise<Response> {
  try {
    return await fn();
  } catch (err) {
    if (isAppError(err)) return json({ error: { code: err.code, message: err.message, ...(err.details ?? {}) } }, { status: err.status });
    console.error(`[${context}] unexpected error:`, err);
    return json({ error: { code: "INTERNAL", message: "Something went wrong on the server; the error has been logged." } }, { status: 500 });
  }
}
