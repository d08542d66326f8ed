import { z } from "zod";

export const settingsPut = z.object({
  key: z.string({ message: "Name the settings group" }).min(1, "Name the settings group").max(60),
  values: z.record(z.string(), z.unknown(), { message: "Give the group's values" }),
});
