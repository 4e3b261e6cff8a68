import { Auth, type AuthConfig } from "@auth/core";
import { CredentialsSignin } from "@auth/core/errors";
import Credentials from "@auth/core/providers/credentials";
import { eq } from "drizzle-orm";
import { z } from "zod";
import { users } from "~db/schema";
import { recordAudit } from "./audit.server";
import { verifySecret } from "./crypto.server";
import { db } from "./db.server";
import { env } from "./env.server";
import { clientAddress, consumeAll, signInFailuresByAccount, signInFailuresByAddress } from "./rate-limit.server";

class TooManyAttempts extends CredentialsSignin {
  code = "rate_limited";
}

const CredentialsSchema = z.object({
  email: z.email().transform((e) => e.toLowerCase()),
  password: z.string().min(1).max(200),
});

const secureCookies = env.APP_URL.startsWith("https:");
export const SESSION_COOKIE = secureCookies ? "__Secure-authjs.session-token" : "authjs.session-token";

export const authConfig: AuthConfig = {
  basePath: "/auth",
  trustHost: true,
  secret: env.AUTH_SECRET,
  useSecureCookies: secureCookies,
  session: { strategy: "jwt", maxAge: 12 * 60 * 60 },
  pages: { signIn: "/signin", error: "/signin" },
  logger: {
    error(error) {
      // Wrong passwords, throttled and token-less sign-ins are expected answers, not faults.
      const type = (error as { type?: string }).type;
      if (type !== "CredentialsSignin" && type !== "MissingCSRF") console.error(error);
    },
    warn() {},
  },
  providers: [
    Credentials({
      credentials: { email: {}, password: {} },
      async authorize(raw, request) {
        const parsed = CredentialsSchema.safeParse(raw);
        if (!parsed.success) return null;
        const { email, password } = parsed.data;
        const address = clientAddress(request);
        // Counted before the password is checked, so parallel guesses cannot slip past the limit;
        // a right password gives the account's attempt back.
        if (!(await consumeAll([[signInFailuresByAccount, email], [signInFailuresByAddress, address]]))) {
          throw new TooManyAttempts();
        }
        const [user] = await db
          .select({ id: users.id, name: users.name, email: users.email, hash: users.passwordHash, active: users.active, organisationId: users.organisationId, sessionVersion: users.sessionVersion })
          .from(users)
          .where(eq(users.email, email));
        const ok = await verifySecret(user?.hash, password);
        if (!user || !ok || !user.active) {
          if (user) {
            await recordAudit(db, {
              actor: { kind: "system", label: "sign-in" },
              organisationId: user.organisationId,
              action: "user.sign_in_failed",
              entity: "user",
              entityId: user.id,
              data: { reason: ok ? "inactive" : "wrong_password" },
            });
          }
          return null;
        }
        await signInFailuresByAccount.delete(email);
        if (address) await signInFailuresByAddress.reward(address, 1);
        await recordAudit(db, {
          actor: { kind: "user", userId: user.id },
          organisationId: user.organisationId,
          action: "user.signed_in",
          entity: "user",
          entityId: user.id,
        });
        return { id: user.id, name: user.name, email: user.email, sessionVersion: user.sessionVersion } as { id: string; name: string; email: string };
      },
    }),
  ],
  callbacks: {
    jwt({ token, user }) {
      if (user) token.sv = (user as { sessionVersion?: number }).sessionVersion ?? 0;
      return token;
    },
    session({ session, token }) {
      if (token.sub) session.user.id = token.sub;
      (session as { sv?: number }).sv = typeof token.sv === "number" ? token.sv : -1;
      return session;
    },
  },
};

export const handleAuth = (request: Request) => Auth(request, authConfig);

/** The signed-in user's id and session version from the session cookie, or null. */
export async function getSession(request: Request): Promise<{ userId: string; version: number } | null> {
  const cookie = request.headers.get("cookie");
  if (!cookie?.includes("authjs.session-token")) return null;
  const url = new URL("/auth/session", request.url);
  const res = await Auth(new Request(url, { headers: { cookie } }), authConfig);
  if (!res.ok) return null;
  const session = (await res.json()) as { user?: { id?: string }; sv?: number } | null;
  return session?.user?.id ? { userId: session.user.id, version: session.sv ?? -1 } : null;
}

/** A CSRF token and its cookie for the sign-in form, which posts straight to Auth.js. */
export async function getCsrf(request: Request) {
  const url = new URL("/auth/csrf", request.url);
  const res = await Auth(new Request(url, { headers: { cookie: request.headers.get("cookie") ?? "" } }), authConfig);
  const { csrfToken } = (await res.json()) as { csrfToken: string };
  return { csrfToken, setCookie: res.headers.getSetCookie() };
}

/** Clears the session cookie: with JWT sessions this is all signing out needs. */
export function clearSessionCookie() {
  return `${SESSION_COOKIE}=; Path=/; HttpOnly; SameSite=Lax; Max-Age=0${secureCookies ? "; Secure" : ""}`;
}
