import { borrowInput } from "@/lib/pool/rules";
import { route } from "@/server/http";
import { applyAsk, run } from "@/server/pool";
import { listBorrows } from "@/db/queries/pool";

/** The caller's loans, as borrower and as lender, newest first. */
export const GET = route({}, async ({ user }) => ({ items: await listBorrows(user.id) }));

export const POST = route({ body: borrowInput, status: 201 }, async ({ user, body }) => {
  const id = body.id ?? crypto.randomUUID();
  await run((tx, version) => applyAsk(tx, version, user, { ...body, id }));
  return { borrow: (await listBorrows(user.id)).find((b) => b.id === id) };
});
