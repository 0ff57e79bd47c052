import "../schemas/zod-config";
import { z } from "zod";
import type { Answer, deletionPreview as deletionPreviewSchema } from "../api/contract";
import { tokenSchema } from "../schemas/account";
import { formatLength } from "../lash";

/**
 * Deleting an account: what the account page shows before it is done, and what it sends. The
 * words are shared by the server (the comments a deleted account leaves) and the screens.
 */

/** Who wrote a comment whose author deleted their account: the words stay, the person does not. */
export const FORMER_MEMBER = "a former member";

/**
 * The proof that the owner asks for the deletion: the account's password, or, for an account
 * without one, the single-use link mailed to its address (the session alone is not enough: a phone
 * left signed in must not be able to erase years of records; OWASP ASVS 5.0 V6, re-authentication
 * before a sensitive change).
 */
export const deleteAccountInput = z
  .object({
    password: z
      .string({ error: "enter your password" })
      .min(1, { error: "enter your password" })
      .max(256, { error: "too long" })
      .optional(),
    token: tokenSchema.optional(),
  })
  .strict()
  .refine((b) => (b.password === undefined) !== (b.token === undefined), {
    error: "enter your password",
    path: ["password"],
  });
export type DeleteAccountInput = z.infer<typeof deleteAccountInput>;

/** Something that stops the deletion until the owner has dealt with it, named so they can. */
export type DeletionBlocker = DeletionPreview["blockers"][number];

/** GET /api/account/deletion: what a deletion would remove, end and keep, counted now (the contract's). */
export type DeletionPreview = Answer<typeof deletionPreviewSchema>;

/** The words a blocker is refused with (the same on the page and in the API's refusal). */
export function blockerText(b: DeletionBlocker): string {
  if (b.kind === "last-admin")
    return `You are the only admin of ${b.clubName}: make another member admin there first (${b.members - 1} other member${b.members === 2 ? "" : "s"}).`;
  const what = `${b.count} × ${formatLength(b.size, "mm")}`;
  return b.side === "borrower"
    ? `You still have ${what} borrowed from ${b.otherName} (${b.state}): give them back and let ${b.otherName} mark them received first.`
    : `${b.otherName} still has ${what} borrowed from you (${b.state}): settle the loan with ${b.otherName} first.`;
}
