import { z } from "zod";
import { ROLES } from "@/lib/auth/permissions";
import { password } from "./common";

export const userCreate = z.object({
  email: z.email("Not a valid e-mail address").max(320),
  name: z.string().trim().min(2, "At least 2 characters").max(120),
  role: z.enum(ROLES, { message: "Choose a role" }),
  password,
});
export const userUpdate = z.object({
  role: z.enum(ROLES).optional(),
  disabled: z.boolean().optional(),
  name: z.string().trim().min(2).max(120).optional(),
  notifyOnFlag: z.boolean().optional(),
});
export const userPassword = z.object({ password });
