import type { Role } from "@/lib/auth/permissions";

declare module "next-auth" {
  interface Session {
    user: { id: string; name?: string | null; email?: string | null; role: Role; teamId: string; signedInAt?: number };
  }
}

declare module "next-auth/jwt" {
  interface JWT {
    role?: Role;
    teamId?: string;
    /** When the user signed in (ms since 1970); kept across token refreshes. */
    signedInAt?: number;
  }
}
