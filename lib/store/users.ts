/**
 * People and their login sessions. Passwords are kept as argon2id hashes (the @node-rs/argon2
 * library, defaults per RFC 9106's second recommended option); session tokens are random 32-byte
 * values of which the table keeps only the sha256.
 */
import { createHash, randomBytes } from "node:crypto";
import { hash as argonHash, verify as argonVerify } from "@node-rs/argon2";
import type { Store } from "./db";

export type Role = "VIEWER" | "EDITOR" | "ADMIN";

export interface SessionUser {
  id: number;
  email: string;
  name: string;
  role: Role;
}

/** Session lifetime. */
export const SESSION_DAYS = 14;

export async function hashPassword(password: string): Promise<string> {
  return argonHash(password);
}

/** Create or update a user with a password (used for the demo team and by admins). */
export async function upsertUser(store: Store, u: { email: string; name: string; role: Role; password: string }): Promise<SessionUser> {
  const passwordHash = await hashPassword(u.password);
  const email = u.email.toLowerCase();
  const row = await store.prisma.user.upsert({
    where: { email },
    create: { email, name: u.name, role: u.role, passwordHash },
    update: { name: u.name, role: u.role, passwordHash },
  });
  return { id: row.id, email: row.email, name: row.name, role: row.role };
}

// A fixed hash to verify against when the email is unknown, so both paths take the same time.
let dummyHash: Promise<string> | undefined;

/** Check email and password; returns the user or null (never says which of the two was wrong). */
export async function verifyLogin(store: Store, email: string, password: string): Promise<SessionUser | null> {
  const row = await store.prisma.user.findUnique({ where: { email: email.toLowerCase() } });
  if (!row) {
    await argonVerify(await (dummyHash ??= argonHash("not-a-password")), password).catch(() => false);
    return null;
  }
  const ok = await argonVerify(row.passwordHash, password).catch(() => false);
  return ok ? { id: row.id, email: row.email, name: row.name, role: row.role } : null;
}

function tokenId(token: string): string {
  return createHash("sha256").update(token).digest("hex");
}

/** Start a session; returns the token for the cookie. */
export async function createSession(store: Store, userId: number, now = new Date()): Promise<{ token: string; expiresAt: Date }> {
  const token = randomBytes(32).toString("base64url");
  const expiresAt = new Date(now.getTime() + SESSION_DAYS * 86_400_000);
  await store.prisma.session.create({ data: { id: tokenId(token), userId, expiresAt } });
  return { token, expiresAt };
}

/** The user of a session token, or null when unknown or expired. */
export async function sessionUser(store: Store, token: string | undefined, now = new Date()): Promise<SessionUser | null> {
  if (!token || token.length > 200) return null;
  const s = await store.prisma.session.findUnique({ where: { id: tokenId(token) }, include: { user: true } });
  if (!s || s.expiresAt <= now) return null;
  return { id: s.user.id, email: s.user.email, name: s.user.name, role: s.user.role };
}

export async function endSession(store: Store, token: string | undefined): Promise<void> {
  if (!token) return;
  await store.prisma.session.deleteMany({ where: { id: tokenId(token) } });
}

const rank: Record<Role, number> = { VIEWER: 1, EDITOR: 2, ADMIN: 3 };
/** True when `role` is at least `needed`. */
export function hasRole(role: Role, needed: Role): boolean {
  return rank[role] >= rank[needed];
}
