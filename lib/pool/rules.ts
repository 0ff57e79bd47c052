import { z } from "zod";
import type { Answer, borrowView, offerView } from "../api/contract";
import "../schemas/zod-config";
import { positiveLengthMm } from "../lash";
import { idSchema } from "../schemas/records";
import { optionalLabelSchema } from "../schemas/label";

/**
 * The club shim pool: offers of spare shims to a club, and loans between members, as states of our
 * own naming. A loan moves only along MOVES, each made by one side; the server applies the same
 * table, so a phone can show which buttons make sense without asking.
 */
export const BORROW_STATES = [
  "asked",
  "agreed",
  "declined",
  "withdrawn",
  "handed-over",
  "giving-back",
  "settled",
] as const;
export type BorrowState = (typeof BORROW_STATES)[number];

export const MOVES = {
  agree: { from: ["asked"], to: "agreed", by: "lender", label: "Agree to lend" },
  decline: { from: ["asked", "agreed"], to: "declined", by: "lender", label: "Decline" },
  withdraw: { from: ["asked", "agreed"], to: "withdrawn", by: "borrower", label: "Withdraw the request" },
  "hand-over": { from: ["agreed"], to: "handed-over", by: "lender", label: "Handed over" },
  "give-back": { from: ["handed-over"], to: "giving-back", by: "borrower", label: "Give back" },
  settle: { from: ["giving-back"], to: "settled", by: "lender", label: "Received back" },
} as const satisfies Record<
  string,
  { from: readonly BorrowState[]; to: BorrowState; by: "lender" | "borrower"; label: string }
>;
export type BorrowMove = keyof typeof MOVES;

/** Requests in these states hold their shims: nobody else can ask for them. */
export const HOLDING: readonly BorrowState[] = ["asked", "agreed"];

export const STATE_WORDS: Record<BorrowState, string> = {
  asked: "asked, waiting for the lender",
  agreed: "agreed: collect them",
  declined: "declined",
  withdrawn: "withdrawn",
  "handed-over": "on loan",
  "giving-back": "on the way back",
  settled: "settled",
};

/**
 * A loan's state as each side reads it: the lender is the one asked, so "waiting for the lender"
 * is the borrower's words, never the lender's.
 */
const LENDER_WORDS: Record<BorrowState, string> = {
  ...STATE_WORDS,
  asked: "asks you for them: agree or decline",
  agreed: "agreed: they will collect them",
  "giving-back": "on the way back to you",
};

export function loanWords(state: BorrowState, side: "lender" | "borrower"): string {
  return side === "lender" ? LENDER_WORDS[state] : STATE_WORDS[state];
}

/** What a step did, in plain words, for a mail's subject ("Shim loan agreed"). */
export const MOVE_WORDS: Record<BorrowMove, string> = {
  agree: "agreed",
  decline: "declined",
  withdraw: "withdrawn",
  "hand-over": "handed over",
  "give-back": "on its way back",
  settle: "received back",
};

export function movesFor(state: BorrowState, side: "lender" | "borrower"): BorrowMove[] {
  return (Object.keys(MOVES) as BorrowMove[]).filter(
    (m) => MOVES[m].by === side && (MOVES[m].from as readonly BorrowState[]).includes(state),
  );
}

export const offerInput = z.object({
  id: idSchema.optional(),
  clubId: idSchema,
  size: positiveLengthMm,
  measuredSize: z.boolean().default(false),
  count: z.number().int().min(1, { error: "offer at least one" }).max(1000),
  shimDiameter: positiveLengthMm.nullable().optional(),
  note: optionalLabelSchema(200).nullable().optional(),
});
export type OfferInput = z.infer<typeof offerInput>;

export const borrowInput = z.object({
  id: idSchema.optional(),
  offerId: idSchema,
  count: z.number().int().min(1, { error: "ask for at least one" }).max(100),
  checkId: idSchema.nullable().optional(),
});
export type BorrowInput = z.infer<typeof borrowInput>;

export const borrowMoveInput = z.object({
  move: z.enum(Object.keys(MOVES) as [BorrowMove, ...BorrowMove[]], { error: "not a step a loan can take" }),
  /** with give-back: the size coming back, when other shims are given in exchange */
  returnSize: positiveLengthMm.nullable().optional(),
});

/** A club's offer as the pool lists it, and a loan as its two sides see it: the contract's (lib/api/contract.ts). */
export type ApiOffer = Answer<typeof offerView>;
export type ApiBorrow = Answer<typeof borrowView>;
