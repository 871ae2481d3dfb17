/**
 * Server-side authorisation for pages, route handlers and server actions. Every protected entry
 * point calls one of these; nothing relies on the client hiding a button.
 */
import "server-only";
import { cookies } from "next/headers";
import { redirect } from "next/navigation";
import { AppError } from "../errors";
import { getStore } from "../store";
import { hasRole, sessionUser, type Role, type SessionUser } from "../store/users";

export const SESSION_COOKIE = "ideafront_session";

export async function currentUser(): Promise<SessionUser | null> {
  const token = (await cookies()).get(SESSION_COOKIE)?.value;
  return sessionUser(await getStore(), token);
}

/** For pages: the signed-in user, else a redirect to the login page. */
export async function requirePageUser(next = "/"): Promise<SessionUser> {
  const user = await currentUser();
  if (!user) redirect(`/login?next=${encodeURIComponent(next)}`);
  return user;
}

/** For route handlers and actions: the user with at least `role`, else an AppError (401/403). */
export async function requireUser(role: Role = "VIEWER"): Promise<SessionUser> {
  const user = await currentUser();
  if (!user) throw new AppError("UNAUTHENTICATED", "Sign in first.");
  if (!hasRole(user.role, role)) throw new AppError("FORBIDDEN", `This needs the ${role.toLowerCase()} role; you are ${user.role.toLowerCase()}.`);
  return user;
}
