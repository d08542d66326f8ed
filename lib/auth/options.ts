// next-auth configuration: e-mail and password, bcrypt hashes, JWT sessions of one working shift.
import "server-only";
import type { NextAuthOptions } from "next-auth";
import CredentialsProvider from "next-auth/providers/credentials";
import { z } from "zod";
import { db } from "@/db/knex";
import { findUserByEmail, recentFailures, recordSignInAttempt, verifyPassword } from "@/db/users";
import type { Role } from "./permissions";
import { decode, encode } from "./jwt";

export const SIGN_IN_LIMITS = { windowMinutes: 15, maxFailuresPerEmail: 5, maxFailuresPerIp: 30 } as const;
export const SESSION_MAX_AGE_SECONDS = 8 * 60 * 60;
export const THROTTLED_MESSAGE = "Too many failed sign-ins. Wait 15 minutes, or ask an administrator to check your account.";

const credentials = z.object({ email: z.string().trim().min(1).max(320), password: z.string().min(1).max(200) });

function clientIp(headers: Record<string, string | string[] | undefined> | undefined): string | null {
  const fwd = headers?.["x-forwarded-for"];
  const value = Array.isArray(fwd) ? fwd[0] : fwd;
  return value ? (value.split(",")[0]?.trim() ?? null) : null;
}

export const authOptions: NextAuthOptions = {
  secret: process.env.NEXTAUTH_SECRET,
  session: { strategy: "jwt", maxAge: SESSION_MAX_AGE_SECONDS },
  jwt: { encode, decode }, // next-auth's token format, with the derived key kept (lib/auth/jwt.ts)
  pages: { signIn: "/sign-in" },
  useSecureCookies: process.env.NODE_ENV === "production" && (process.env.NEXTAUTH_URL ?? "").startsWith("https://"),
  providers: [
    CredentialsProvider({
      name: "Rimwatch",
      credentials: { email: { label: "E-mail", type: "email" }, password: { label: "Password", type: "password" } },
      async authorize(raw, req) {
        const parsed = credentials.safeParse(raw);
        if (!parsed.success) return null;
        const { email, password } = parsed.data;
        const ip = clientIp(req?.headers);
        const k = db();
        const failures = await recentFailures(k, email, ip, SIGN_IN_LIMITS.windowMinutes);
        if (failures.byEmail >= SIGN_IN_LIMITS.maxFailuresPerEmail || failures.byIp >= SIGN_IN_LIMITS.maxFailuresPerIp) {
          throw new Error(THROTTLED_MESSAGE);
        }
        const user = await findUserByEmail(k, email);
        const ok = !!user && !user.disabled_at && (await verifyPassword(password, user.password_hash));
        await recordSignInAttempt(k, email, ip, ok);
        if (!ok || !user) return null;
        return { id: user.id, email: user.email, name: user.name, role: user.role, teamId: user.team_id };
      },
    }),
  ],
  callbacks: {
    async jwt({ token, user }) {
      if (user) {
        const u = user as { id: string; role: Role; teamId: string };
        token.sub = u.id;
        token.role = u.role;
        token.teamId = u.teamId;
        token.signedInAt = Date.now();
      }
      return token;
    },
    async session({ session, token }) {
      if (session.user) {
        session.user.id = token.sub ?? "";
        session.user.role = token.role as Role;
        session.user.teamId = token.teamId as string;
        session.user.signedInAt = token.signedInAt;
      }
      return session;
    },
  },
};
