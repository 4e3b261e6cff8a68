import { z } from "zod";

// Messages are i18n keys; the form translates them.
export const NewPasswordSchema = z
  .object({
    password: z.string().min(10, "password.tooShort").max(200, "password.tooShort"),
    confirm: z.string(),
  })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], message: "password.mismatch" });

export const PinSchema = z.string().regex(/^\d{4,6}$/, "team.pinFormat");
