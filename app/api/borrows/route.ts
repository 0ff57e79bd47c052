import { borrowInput } from "@/lib/pool/rules";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { apply } from "@/server/appliers";
import { write } from "@/server/write";
import { listBorrows } from "@/db/queries/pool";

/** The caller's loans, as borrower and as lender, newest first. */
export const GET = route({ response: answers.borrows }, async ({ user }) => ({ items: await listBorrows(user.id) }));

export const POST = route({ response: answers.borrow, body: borrowInput, status: 201 }, async ({ user, body }) => {
  const id = body.id ?? crypto.randomUUID();
  await write(user, (w) => apply(w, "borrow.ask/1", { ...body, id }));
  return { borrow: (await listBorrows(user.id)).find((b) => b.id === id) };
});
