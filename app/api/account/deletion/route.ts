import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { deletionPreview } from "@/server/account-deletion";

/** What deleting the account would remove, end and keep, and what stops it now (the confirmation screen). */
export const GET = route({ response: answers.deletionPreview }, async ({ user }) => ({
  preview: await deletionPreview(user),
}));
