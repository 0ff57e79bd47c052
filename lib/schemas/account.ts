import "./zod-config";
import { z } from "zod";
import { passwordSchema } from "../auth/password-rules";
import { labelSchema } from "./label";
import { LENGTH_UNITS } from "../lash/units";

export const emailSchema = z
  .string({ error: "enter an e-mail address" })
  .trim()
  .toLowerCase()
  .max(254)
  .pipe(z.email({ error: "enter a valid e-mail address" }));

export const tokenSchema = z.string().regex(/^[A-Za-z0-9_-]{20,100}$/, { error: "this link is not valid" });

export const signUpInput = z.object({
  email: emailSchema,
  name: labelSchema(120, "enter your name"),
  password: passwordSchema,
});

export const emailOnlyInput = z.object({ email: emailSchema });
export const tokenInput = z.object({ token: tokenSchema });
/** Confirming an address also proves the sign-up's password: the link alone does not bind it. */
export const verifyInput = z.object({
  token: tokenSchema,
  password: z.string().max(200, { error: "too long" }).optional(),
});
export const newPasswordInput = z.object({ token: tokenSchema, password: passwordSchema });

export const settingsInput = z
  .object({
    name: labelSchema(120, "enter your name"),
    displayUnit: z.enum(LENGTH_UNITS),
    noticesByEmail: z.boolean(),
  })
  .partial()
  .refine((s) => Object.keys(s).length > 0, { error: "nothing to change" });
