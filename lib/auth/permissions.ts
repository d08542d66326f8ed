// Permissions are data: each is "resource.action"; each role holds a list. A new role fails to
// compile until it is given its list.

export const ROLES = ["registrar", "consultant", "nurse", "admin"] as const;
export type Role = (typeof ROLES)[number];

export const PERMISSIONS = {
  "patient.read": "See patients and their contact details",
  "patient.write": "Register patients and edit their details",
  "episode.read": "See pneumothorax episodes",
  "episode.write": "Start and update episodes, oxygen and procedures",
  "film.read": "See films and their previews",
  "film.upload": "Upload films",
  "film.delete": "Withdraw a film uploaded in error",
  "film.calibrate": "Set a film's calibration by a reference line",
  "measurement.write": "Measure films with the caliper set",
  "measurement.signoff": "Sign off measurements",
  "flag.read": "See deviation flags",
  "flag.resolve": "Acknowledge and resolve deviation flags",
  "drain.write": "Record chest drains and drain observations",
  "booking.read": "See the follow-up diary",
  "booking.write": "Book, move and cancel repeat films",
  "message.read": "See the send log",
  "export.read": "Download letters, CSV and FHIR exports",
  "user.manage": "Create, disable and change the role of users",
  "settings.read": "See rule and protocol settings",
  "settings.write": "Change rule and protocol settings",
  "audit.read": "Read the audit log",
} as const;
export type Permission = keyof typeof PERMISSIONS;

export const ROLE_LABELS = {
  registrar: "Registrar",
  consultant: "Consultant",
  nurse: "Clinic nurse",
  admin: "Administrator",
} satisfies Record<Role, string>;

const clinicalRead: Permission[] = ["patient.read", "episode.read", "film.read", "flag.read", "booking.read", "message.read", "export.read", "settings.read"];

export const ROLE_PERMISSIONS = {
  registrar: [...clinicalRead, "patient.write", "episode.write", "film.upload", "film.delete", "film.calibrate", "measurement.write", "drain.write"],
  consultant: [
    ...clinicalRead,
    "patient.write",
    "episode.write",
    "film.upload",
    "film.delete",
    "film.calibrate",
    "measurement.write",
    "measurement.signoff",
    "flag.resolve",
    "drain.write",
  ],
  nurse: [...clinicalRead, "patient.write", "booking.write"],
  admin: ["user.manage", "settings.read", "settings.write", "audit.read"],
} satisfies Record<Role, Permission[]>;

export function can(role: Role, permission: Permission): boolean {
  return (ROLE_PERMISSIONS[role] as readonly Permission[]).includes(permission);
}
