import type { Permission, Role } from "@/lib/auth/permissions";

export interface NavItem {
  href: string;
  label: string;
  permission: Permission;
}

/** The main menu, in the order each role reaches for it. */
export const NAV_BY_ROLE: Record<Role, NavItem[]> = {
  registrar: [
    { href: "/", label: "Today", permission: "episode.read" },
    { href: "/patients", label: "Patients", permission: "patient.read" },
    { href: "/board", label: "Deviation board", permission: "flag.read" },
  ],
  consultant: [
    { href: "/", label: "Today", permission: "episode.read" },
    { href: "/board", label: "Deviation board", permission: "flag.read" },
    { href: "/patients", label: "Patients", permission: "patient.read" },
  ],
  nurse: [
    { href: "/", label: "Today", permission: "episode.read" },
    { href: "/diary", label: "Follow-up diary", permission: "booking.read" },
    { href: "/send-log", label: "Send log", permission: "message.read" },
    { href: "/patients", label: "Patients", permission: "patient.read" },
  ],
  admin: [
    { href: "/admin/users", label: "Users", permission: "user.manage" },
    { href: "/admin/settings", label: "Settings", permission: "settings.read" },
    { href: "/admin/audit", label: "Audit log", permission: "audit.read" },
  ],
};
