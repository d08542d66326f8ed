import type { Role } from "@/lib/auth/permissions";

declare module "next-auth" {
  interface Session {
    user: { id: string; name?: string | null; email?: string | null; role: Role; teamId: string };
  }
}

declare module "next-auth/jwt" {
  interface JWT {
    role?: Role;
    teamId?: string;
  }
}
