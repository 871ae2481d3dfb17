"use server";
import { cookies, headers } from "next/headers";
import { redirect } from "next/navigation";
import { z } from "zod";
import { SESSION_COOKIE } from "@/lib/server/auth";
import { getStore } from "@/lib/store";
import { createSession, endSession, verifyLogin } from "@/lib/store/users";

const LoginInput = z.object({
  email: z.string().trim().email("Enter an email address.").max(200),
  password: z.string().min(1, "Enter your password.").max(200),
  next: z.string().max(500).optional(),
});

export interface LoginState {
  error?: string;
  /** The email typed, so the form keeps it after a failed attempt. */
  email?: string;
}

/** Only same-site paths may follow a login. */
function safeNext(next: string | undefined): string {
  return next && next.startsWith("/") && !next.startsWith("//") ? next : "/";
}

export async function signInAction(_prev: LoginState, form: FormData): Promise<LoginState> {
  const parsed = LoginInput.safeParse({ email: form.get("email"), password: form.get("password"), next: form.get("next") ?? undefined });
  const email = String(form.get("email") ?? "").slice(0, 200);
  if (!parsed.success) return { error: parsed.error.issues[0]!.message, email };
  const store = await getStore();
  const user = await verifyLogin(store, parsed.data.email, parsed.data.password);
  if (!user) return { error: "That email and password do not match an account.", email };
  const { token, expiresAt } = await createSession(store, user.id);
  const secure = (await headers()).get("x-forwarded-proto") === "https";
  (await cookies()).set(SESSION_COOKIE, token, { httpOnly: true, sameSite: "lax", secure, path: "/", expires: expiresAt });
  redirect(safeNext(parsed.data.next));
}

export async function signOutAction(): Promise<void> {
  const jar = await cookies();
  await endSession(await getStore(), jar.get(SESSION_COOKIE)?.value);
  jar.delete(SESSION_COOKIE);
  redirect("/login");
}
