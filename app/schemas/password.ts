import { z } from "zod";

export const passwordChangeSchema = z
  .object({
    current: z.string().min(1, "Enter your current password").max(200, "At most 200 characters"),
    password: z.string().min(10, "Use at least 10 characters").max(200, "At most 200 characters"),
    confirm: z.string(),
  })
  .refine((value) => value.password === value.confirm, { path: ["confirm"], message: "The two passwords differ" });
