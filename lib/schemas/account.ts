import "./zod-config";
import { z } from "zod";
import { passwordSchema } from "../auth/password-rules";

export const emailSchema = z
  .string({ error: "enter an e-mail address" })
  .trim()
  .toLowerCase()
  .max(254)
  .pipe(z.email({ error: "enter a valid e-mail address" }));

export const tokenSchema = z.string().regex(/^[A-Za-z0-9_-]{20,100}$/, { error: "this link is not valid" });

export const signUpInput = z.object({
  email: emailSchema,
  name: z.string().trim().min(1, { error: "enter your name" }).max(120),
  password: passwordSchema,
});

export const emailOnlyInput = z.object({ email: emailSchema });
export const tokenInput = z.object({ token: tokenSchema });
/** Confirming an address also proves the sign-up's password: the link alone does not bind it. */
export const verifyInput = z.object({ token: tokenSchema, password: z.string().max(200, { error: "too long" }).optional() });
export const newPasswordInput = z.object({ token: tokenSchema, password: passwordSchema });

export const settingsInput = z
  .object({
    name: z.string().trim().min(1).max(120),
    displayUnit: z.enum(["mm", "in"]),
    noticesByEmail: z.boolean(),
  })
  .partial()
  .refine((s) => Object.keys(s).length > 0, { error: "nothing to change" });
