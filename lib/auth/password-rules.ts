import { z } from "zod";
import { isCommonPassword, PASSWORD_MAX, PASSWORD_MIN } from "./password-list";

export { PASSWORD_MAX, PASSWORD_MIN };

/** The server's password rule (NIST SP 800-63B 5.1.1.2; the list is in ./password-list). */
export const passwordSchema = z
  .string({ error: "enter a password" })
  .min(PASSWORD_MIN, { error: `use at least ${PASSWORD_MIN} characters` })
  .max(PASSWORD_MAX, { error: `use at most ${PASSWORD_MAX} characters` })
  .refine((p) => !isCommonPassword(p), { error: "this password is too common: choose another" });
