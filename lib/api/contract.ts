import "../schemas/zod-config";
import { z } from "zod";
import { nearSideSchema, positiveLengthMm, shimPositionSchema, timingSchema } from "../lash";
import {
  checkInput,
  checkStatus,
  checkUpdate,
  clubInput,
  commentInput,
  engineFields,
  engineInput,
  engineUpdate,
  idSchema,
  inviteInput,
  readingsPut,
  roleSchema,
  rolesInput,
  shareInput,
  trayItemInput,
  trayItemUpdate,
  verdictInput,
} from "../schemas/records";
import {
  emailOnlyInput,
  newPasswordInput,
  settingsInput,
  signUpInput,
  tokenInput,
  verifyInput,
} from "../schemas/account";
import { deleteAccountInput } from "../account/deletion";
import { borrowInput, borrowMoveInput, BORROW_STATES, offerInput } from "../pool/rules";
import { pullInput, pushInput } from "../sync/mutations";
import { photoFields } from "../photos/rules";
import { VERDICT_NAMES } from "../check/verdicts";
import { LENGTH_UNITS, ODOMETER_UNITS } from "../lash/units";

/**
 * The API's contract: what every route under app/api answers, as zod schemas, beside the request
 * schemas the routes already parse with (imported, never written again). `route()` (server/http.ts)
 * types each handler's answer by its schema and, in the test servers, checks every answer against
 * it; the phone's client (lib/api/client.ts) takes its types from here with z.infer (types only: no
 * schema reaches a page's JavaScript through it); GET /api/openapi.json publishes the table below.
 */

/** A moment, as JSON carries it (a Date is sent as its ISO string). The brand lets route() accept a Date for it. */
export const instant = z.iso.datetime({ offset: true }).brand<"instant">();
type Instant = z.output<typeof instant>;

/** What a handler may return for a schema's output: a Date wherever an instant is sent. */
export type Sendable<T> = T extends Instant
  ? string | Date
  : T extends readonly (infer U)[]
    ? Sendable<U>[]
    : T extends object
      ? { [K in keyof T]: Sendable<T[K]> }
      : T;
/** What the phone receives for a schema: instants are plain ISO strings. */
export type Wire<T> = T extends Instant
  ? string
  : T extends readonly (infer U)[]
    ? Wire<U>[]
    : T extends object
      ? { [K in keyof T]: Wire<T[K]> }
      : T;
/** The answer of an endpoint as the phone reads it. */
export type Answer<S extends z.ZodType> = Wire<z.output<S>>;

const count = z.number().int().min(0);
const version = z.number().int().min(0);

// ---- shared shapes --------------------------------------------------------------------------

/** Every refusal: `{ error: { code, message, fields?, requestId? } }` (server/http.ts errorBody). */
export const errorShape = z
  .object({
    error: z.object({
      code: z.string(),
      message: z.string(),
      fields: z.record(z.string(), z.string()).optional(),
      requestId: z.string().optional(),
    }),
  })
  .meta({ id: "Error" });

/** No body (204). */
export const noContent = z.undefined();
/** Not JSON (a file, a zip, a redirect): the handler answers a Response of its own. */
export const notJson = z.never();

const accepted = z.object({ ok: z.literal(true), message: z.string() });

/** A page of a list (server/http.ts page()). */
const pageOf = <T extends z.ZodType>(item: T) =>
  z.object({ items: z.array(item), nextOffset: z.number().int().nullable() });
const listOf = <T extends z.ZodType>(item: T) => z.object({ items: z.array(item) });

// ---- records ---------------------------------------------------------------------------------

export const publicUser = z
  .object({
    id: z.string(),
    email: z.string(),
    name: z.string(),
    displayUnit: z.enum(LENGTH_UNITS),
    noticesByEmail: z.boolean(),
  })
  .meta({ id: "User" });

/** An engine as stored: the input's fields with every optional one present (null when unsaid). */
export const engineRecord = engineFields
  .extend({
    id: idSchema,
    firingAngles: z.array(z.number()).nullable(),
    timing: timingSchema,
    shimDiameter: positiveLengthMm.nullable(),
    assembledShim: positiveLengthMm.nullable(),
    shimPosition: shimPositionSchema.nullable(),
    nearSide: nearSideSchema.nullable(),
    version,
    updatedAt: instant,
  })
  .meta({ id: "Engine" });

export const checkRecord = z
  .object({
    id: idSchema,
    engineId: idSchema,
    odometer: z.number(),
    measuredHot: z.boolean(),
    status: checkStatus,
    notes: z.string().nullable(),
    startedAt: instant,
    closedAt: instant.nullable(),
    version,
  })
  .meta({ id: "Check" });

const mm = z.number().nullable();
export const readingRecord = z
  .object({
    id: idSchema,
    checkId: idSchema,
    valve: z.string(),
    round: z.number().int(),
    installedStamp: mm,
    installedMicrometer: mm,
    feelerGo: mm,
    feelerNoGo: mm,
    measured: mm,
    method: z.enum(["feeler", "typed"]),
    fittedShim: mm,
    fittedAt: instant.nullable(),
    version,
    updatedAt: instant,
  })
  .meta({ id: "Reading" });

export const trayRecord = z
  .object({
    id: idSchema,
    size: z.number(),
    measuredSize: z.boolean(),
    count: z.number().int(),
    shimDiameter: mm,
    version,
  })
  .meta({ id: "TrayItem" });

export const commentRecord = z
  .object({
    id: idSchema,
    checkId: idSchema,
    valve: z.string().nullable(),
    body: z.string(),
    createdAt: instant,
    /** null: the author deleted their account (authorName is then FORMER_MEMBER) */
    authorId: z.string().nullable(),
    authorName: z.string(),
  })
  .meta({ id: "Comment" });

export const shareRecord = z
  .object({
    id: idSchema,
    checkId: idSchema,
    clubId: idSchema,
    verdict: z.enum(VERDICT_NAMES).nullable(),
    verdictAt: instant.nullable(),
    withdrawnAt: instant.nullable(),
    createdAt: instant,
  })
  .meta({ id: "Share" });

const roles = z.array(roleSchema);
export const clubSummary = z.object({ id: idSchema, name: z.string(), roles }).meta({ id: "ClubSummary" });
export const member = z
  .object({ userId: z.string(), name: z.string(), email: z.string(), roles })
  .meta({ id: "Member" });
export const queueItem = z
  .object({
    shareId: idSchema,
    checkId: idSchema,
    engineName: z.string(),
    odometerUnit: z.enum(ODOMETER_UNITS),
    ownerName: z.string(),
    odometer: z.number(),
    status: checkStatus,
    verdict: z.enum(VERDICT_NAMES).nullable(),
    sharedAt: instant,
  })
  .meta({ id: "QueueItem" });
export const inviteRecord = z
  .object({
    id: idSchema,
    email: z.string(),
    role: roleSchema,
    expiresAt: instant,
    acceptedAt: instant.nullable(),
    withdrawnAt: instant.nullable(),
    createdAt: instant,
  })
  .meta({ id: "Invite" });
export const clubLogEntry = z
  .object({
    id: z.string(),
    action: z.string(),
    at: instant,
    actorName: z.string(),
    subjectName: z.string().nullable(),
    subjectEmail: z.string().nullable(),
    detail: z.string(),
  })
  .meta({ id: "ClubLogEntry" });

export const photoRecord = z
  .object({
    id: idSchema,
    checkId: idSchema,
    valve: z.string().nullable(),
    commentId: z.string().nullable(),
    width: z.number().int().nullable(),
    height: z.number().int().nullable(),
    bytes: count,
    uploaderId: z.string(),
    uploaderName: z.string(),
    createdAt: instant,
  })
  .meta({ id: "Photo" });
export const photoUsage = z.object({ usedBytes: count, quotaBytes: count }).meta({ id: "PhotoUsage" });

export const offerView = z
  .object({
    id: idSchema,
    clubId: idSchema,
    ownerId: z.string(),
    ownerName: z.string(),
    size: z.number(),
    measuredSize: z.boolean(),
    count: z.number().int(),
    /** copies not held by open requests */
    available: z.number().int(),
    shimDiameter: mm,
    note: z.string().nullable(),
  })
  .meta({ id: "PoolOffer" });
/** An offer as stored (the answer to making one). */
export const offerRow = z
  .object({
    id: idSchema,
    clubId: idSchema,
    ownerId: z.string(),
    size: z.number(),
    measuredSize: z.boolean(),
    count: z.number().int(),
    shimDiameter: mm,
    note: z.string().nullable(),
    withdrawnAt: instant.nullable(),
    asks: count,
    version,
    createdAt: instant,
    updatedAt: instant,
  })
  .meta({ id: "StoredOffer" });
export const borrowView = z
  .object({
    id: idSchema,
    offerId: idSchema,
    clubId: idSchema,
    borrowerId: z.string(),
    borrowerName: z.string(),
    lenderId: z.string(),
    lenderName: z.string(),
    checkId: z.string().nullable(),
    size: z.number(),
    count: z.number().int(),
    state: z.enum(BORROW_STATES),
    returnSize: mm,
    updatedAt: z.string(),
  })
  .meta({ id: "Loan" });

const named = z.object({ id: z.string(), name: z.string() });
export const deletionPreview = z
  .object({
    email: z.string(),
    hasPassword: z.boolean(),
    engines: count,
    checks: count,
    readings: count,
    photos: count,
    trayItems: count,
    /** live shares of the account's checks with clubs: withdrawn */
    shares: count,
    /** clubs the account belongs to: the membership ends */
    clubs: z.array(named),
    /** clubs of which the account is the only member: they go with it */
    soloClubs: z.array(named),
    /** comments written on other members' checks: they stay, shown as from FORMER_MEMBER */
    commentsKept: count,
    blockers: z.array(
      z.discriminatedUnion("kind", [
        z.object({ kind: z.literal("last-admin"), clubId: z.string(), clubName: z.string(), members: count }),
        z.object({
          kind: z.literal("open-loan"),
          loanId: z.string(),
          otherName: z.string(),
          side: z.enum(["lender", "borrower"]),
          count,
          size: z.number(),
          state: z.string(),
        }),
      ]),
    ),
  })
  .meta({ id: "DeletionPreview" });

const healthCheck = z.object({ ok: z.boolean(), skipped: z.literal(true).optional(), detail: z.string().optional() });

// ---- sync --------------------------------------------------------------------------------------

export const rejectedMutation = z.object({ id: z.number().int(), name: z.string(), reason: z.string() });
/** What a push answers (server/sync.ts PushResult). */
export const pushAnswer = z
  .object({
    lastMutationId: z.number().int(),
    /** refused for good: the phone keeps each one, shows its reason, and the mechanic decides */
    rejected: z.array(rejectedMutation),
    /** not applied yet: sent again later under the same id; nothing after it was applied */
    later: rejectedMutation.optional(),
  })
  .meta({ id: "PushAnswer" });
/** One page of a pull (server/sync.ts pull). */
export const pullAnswer = z
  .object({
    /** opaque: kept as it came and sent back on the next pull */
    cursor: z.string(),
    /** another page follows */
    more: z.boolean(),
    full: z.boolean(),
    engines: z.array(engineRecord),
    checks: z.array(checkRecord),
    readings: z.array(readingRecord),
    tray: z.array(trayRecord),
    comments: z.array(
      z.object({
        id: idSchema,
        checkId: idSchema,
        authorId: z.string().nullable(),
        valve: z.string().nullable(),
        body: z.string(),
        createdAt: instant,
        version,
      }),
    ),
    tombstones: z.array(z.object({ entity: z.string(), id: z.string(), version })),
  })
  .meta({ id: "PullPage" });

// ---- every answer, by route ------------------------------------------------------------------

/** The success body of each route, named by method and path (the routes and the client use these). */
export const answers = {
  accountGet: z.object({ user: publicUser }),
  accountPatch: z.object({ user: publicUser }),
  accountDelete: z.object({ deleted: z.literal(true), photos: count, commentsKept: count }),
  accepted,
  ok: z.object({ ok: z.literal(true) }),
  verified: z.object({ ok: z.literal(true), email: z.string() }),
  linkAccount: z.object({ account: z.object({ email: z.string() }) }),
  deletionPreview: z.object({ preview: deletionPreview }),
  exportTicket: z.object({ href: z.string(), fileName: z.string() }),
  imported: z.object({
    imported: z.object({
      engines: count,
      checks: count,
      readings: count,
      comments: count,
      photos: count,
      tray: count,
      photosNotIncluded: count,
      commentsNotRestored: count,
    }),
  }),
  borrows: listOf(borrowView),
  borrow: z.object({ borrow: borrowView.optional() }),
  comments: listOf(commentRecord),
  comment: z.object({ comment: commentRecord }),
  photos: listOf(photoRecord),
  photoUploaded: z.object({ photo: photoRecord, usage: photoUsage }),
  photoUsage,
  readings: z.object({ readings: z.array(readingRecord) }),
  checkView: z.object({ check: checkRecord, engine: engineRecord, access: z.enum(["owner", "mentor"]) }),
  check: z.object({ check: checkRecord }),
  checks: pageOf(checkRecord),
  shares: listOf(shareRecord),
  share: z.object({ share: shareRecord }),
  invites: listOf(inviteRecord),
  invite: z.object({ invite: z.object({ id: idSchema, email: z.string(), role: roleSchema }) }),
  clubLog: pageOf(clubLogEntry),
  member: z.object({ member: member.optional() }),
  members: listOf(member),
  pool: listOf(offerView),
  offer: z.object({ offer: offerRow }),
  queue: pageOf(queueItem),
  club: z.object({ club: z.object({ id: idSchema, name: z.string(), createdAt: instant, roles }) }),
  clubs: listOf(clubSummary),
  clubCreated: z.object({ club: clubSummary }),
  engines: pageOf(engineRecord),
  engine: z.object({ engine: engineRecord }),
  live: z.object({ status: z.literal("live") }),
  ready: z.object({
    status: z.enum(["ready", "not ready"]),
    failed: z.array(z.string()),
    checks: z.record(z.string(), healthCheck),
  }),
  inviteAccepted: z.object({ clubId: idSchema, clubName: z.string() }),
  unsubscribed: z.object({ stopped: z.literal(true) }),
  tray: pageOf(trayRecord),
  trayItem: z.object({ item: trayRecord }),
  pull: pullAnswer,
  push: pushAnswer,
  openapi: z.looseObject({
    openapi: z.string().startsWith("3.1"),
    info: z.looseObject({ title: z.string(), version: z.string() }),
    paths: z.record(z.string(), z.unknown()),
  }),
  noContent,
  notJson,
} as const;

// ---- the published table ----------------------------------------------------------------------

/** Plain decimal digits only: Number() would also take "0x10", "1e3" or " 7 ". */
const digits = z
  .string()
  .regex(/^\d{1,7}$/, { error: "a whole number" })
  .transform(Number);
/** ?limit=&offset= of the listing routes. */
export const pageQuery = z.object({
  limit: digits.pipe(z.number().int().min(1).max(200)).default(50),
  offset: digits.pipe(z.number().int().min(0).max(1_000_000)).default(0),
});

export type Method = "GET" | "POST" | "PUT" | "PATCH" | "DELETE";
export interface Endpoint {
  method: Method;
  /** OpenAPI's form: "/api/checks/{checkId}" */
  path: string;
  summary: string;
  /** false: no sign-in asked */
  auth: boolean;
  status: number;
  query?: z.ZodType;
  body?: z.ZodType;
  /** a body that is not JSON */
  bodyType?: "application/zip" | "multipart/form-data" | "application/x-www-form-urlencoded";
  /** the fields of a multipart body */
  form?: z.ZodType;
  response: z.ZodType;
  /** the media type of an answer that is not JSON */
  responseType?: string;
}

const e = (
  method: Method,
  path: string,
  summary: string,
  response: z.ZodType,
  more: Partial<Omit<Endpoint, "method" | "path" | "summary" | "response">> = {},
): Endpoint => ({ method, path, summary, response, auth: true, status: response === noContent ? 204 : 200, ...more });
const open = { auth: false } as const;

/** Every route under app/api with its methods (the integration test lists the files and checks this). */
export const endpoints: Endpoint[] = [
  e("GET", "/api/account", "The signed-in account", answers.accountGet),
  e("PATCH", "/api/account", "Change the account's name, unit or notices", answers.accountPatch, {
    body: settingsInput,
  }),
  e("DELETE", "/api/account", "Delete the account (password or mailed link)", answers.accountDelete, {
    body: deleteAccountInput,
  }),
  e("GET", "/api/account/deletion", "What deleting the account would remove and keep", answers.deletionPreview),
  e("POST", "/api/account/deletion/link", "Mail a link that confirms the deletion", answers.accepted, {
    status: 202,
  }),
  e("POST", "/api/account/export", "Get a ticket for the account's export", answers.exportTicket, {
    body: z.strictObject({}),
  }),
  e("GET", "/api/account/export", "The export's zip", notJson, {
    query: z.object({ ticket: z.string().min(10).max(200) }),
    responseType: "application/zip",
  }),
  e("POST", "/api/account/import", "Import an export's zip into an empty account", answers.imported, {
    status: 201,
    bodyType: "application/zip",
  }),
  e("POST", "/api/account/password-reset", "Mail a password reset link", answers.accepted, {
    ...open,
    body: emailOnlyInput,
    status: 202,
  }),
  e("POST", "/api/account/password", "Set a new password with a mailed link", answers.ok, {
    ...open,
    body: newPasswordInput,
  }),
  e("POST", "/api/account/sign-in-link", "Mail a sign-in link", answers.accepted, {
    ...open,
    body: emailOnlyInput,
    status: 202,
  }),
  e("POST", "/api/account/sign-in-link/account", "Whose a sign-in link is", answers.linkAccount, {
    ...open,
    body: tokenInput,
  }),
  e("POST", "/api/account/sign-up", "Open an account", answers.accepted, { ...open, body: signUpInput, status: 202 }),
  e("POST", "/api/account/verify", "Confirm an address", answers.verified, { ...open, body: verifyInput }),
  e("POST", "/api/account/verify/resend", "Mail the confirmation link again", answers.accepted, {
    ...open,
    body: emailOnlyInput,
    status: 202,
  }),
  e("GET", "/api/auth/{nextauth}", "Sign-in provider (session, csrf, providers)", z.unknown(), open),
  e("POST", "/api/auth/{nextauth}", "Sign in or out (form posts)", z.unknown(), {
    ...open,
    bodyType: "application/x-www-form-urlencoded",
  }),
  e("GET", "/api/borrows", "The caller's loans", answers.borrows),
  e("POST", "/api/borrows", "Ask to borrow shims from an offer", answers.borrow, { body: borrowInput, status: 201 }),
  e("PUT", "/api/borrows/{borrowId}", "One step of a loan", answers.borrow, { body: borrowMoveInput }),
  e("GET", "/api/checks/{checkId}", "A check with its engine", answers.checkView),
  e("PATCH", "/api/checks/{checkId}", "Change a check", answers.check, { body: checkUpdate }),
  e("DELETE", "/api/checks/{checkId}", "Delete a check", noContent),
  e("GET", "/api/checks/{checkId}/comments", "A check's comments", answers.comments),
  e("POST", "/api/checks/{checkId}/comments", "Comment on a check or a valve", answers.comment, {
    body: commentInput,
    status: 201,
  }),
  e("GET", "/api/checks/{checkId}/photos", "A check's photos", answers.photos),
  e("POST", "/api/checks/{checkId}/photos", "Add a photo (201 new, 200 sent before)", answers.photoUploaded, {
    status: 201,
    bodyType: "multipart/form-data",
    form: photoFields.extend({ file: z.string().meta({ format: "binary", description: "the image" }) }),
  }),
  e("GET", "/api/checks/{checkId}/readings", "A check's readings", answers.readings),
  e("PUT", "/api/checks/{checkId}/readings", "Create or replace readings", answers.readings, { body: readingsPut }),
  e("GET", "/api/checks/{checkId}/shares", "Who a check is shared with", answers.shares),
  e("POST", "/api/checks/{checkId}/shares", "Share a check with a club", answers.share, {
    body: shareInput,
    status: 201,
  }),
  e("GET", "/api/clubs", "The caller's clubs", answers.clubs),
  e("POST", "/api/clubs", "Make a club", answers.clubCreated, { body: clubInput, status: 201 }),
  e("GET", "/api/clubs/{clubId}", "A club", answers.club),
  e("GET", "/api/clubs/{clubId}/invites", "A club's invitations (admins)", answers.invites),
  e("POST", "/api/clubs/{clubId}/invites", "Invite someone (admins)", answers.invite, {
    body: inviteInput,
    status: 201,
  }),
  e("DELETE", "/api/clubs/{clubId}/invites/{inviteId}", "Withdraw an invitation", noContent),
  e("GET", "/api/clubs/{clubId}/log", "The club's log (admins)", answers.clubLog, { query: pageQuery }),
  e("GET", "/api/clubs/{clubId}/members", "A club's members", answers.members),
  e("PUT", "/api/clubs/{clubId}/members/{userId}", "Set a member's roles (admins)", answers.member, {
    body: rolesInput,
  }),
  e("DELETE", "/api/clubs/{clubId}/members/{userId}", "Remove a member, or leave", noContent),
  e("GET", "/api/clubs/{clubId}/pool", "The club's pool of spare shims", answers.pool),
  e("POST", "/api/clubs/{clubId}/pool", "Offer shims to the club", answers.offer, {
    body: offerInput.omit({ clubId: true }),
    status: 201,
  }),
  e("GET", "/api/clubs/{clubId}/queue", "Checks shared with the club (mentors)", answers.queue, { query: pageQuery }),
  e("GET", "/api/engines", "The caller's engines", answers.engines, { query: pageQuery }),
  e("POST", "/api/engines", "Add an engine", answers.engine, { body: engineInput, status: 201 }),
  e("GET", "/api/engines/{engineId}", "An engine", answers.engine),
  e("PATCH", "/api/engines/{engineId}", "Change an engine", answers.engine, { body: engineUpdate.omit({ id: true }) }),
  e("DELETE", "/api/engines/{engineId}", "Delete an engine and its checks", noContent),
  e("GET", "/api/engines/{engineId}/checks", "An engine's checks", answers.checks, { query: pageQuery }),
  e("POST", "/api/engines/{engineId}/checks", "Start a check", answers.check, { body: checkInput, status: 201 }),
  e("GET", "/api/health/live", "The process answers", answers.live, open),
  e("GET", "/api/health/ready", "May this instance take requests (503 when not)", answers.ready, open),
  e("POST", "/api/invites/accept", "Accept a club invitation", answers.inviteAccepted, { body: tokenInput }),
  e("GET", "/api/notices/unsubscribe", "Leads to the page that asks (303)", notJson, {
    ...open,
    status: 303,
    query: z.object({ token: z.string().min(1).max(600) }),
  }),
  e("POST", "/api/notices/unsubscribe", "Stop notices by mail (RFC 8058 one-click)", answers.unsubscribed, {
    ...open,
    query: z.object({ token: z.string().min(1).max(600) }),
  }),
  e("GET", "/api/openapi.json", "This document", answers.openapi, open),
  e("GET", "/api/photos/{photoId}", "A photo's bytes", notJson, { responseType: "image/*" }),
  e("DELETE", "/api/photos/{photoId}", "Delete a photo", noContent),
  e("GET", "/api/photos/usage", "The account's photo space", answers.photoUsage),
  e("DELETE", "/api/pool/{offerId}", "Take an offer back", noContent),
  e("DELETE", "/api/shares/{shareId}", "Withdraw a share", noContent),
  e("PUT", "/api/shares/{shareId}/verdict", "A mentor's verdict", answers.share, { body: verdictInput }),
  e("POST", "/api/sync/pull", "What changed since the cursor, a page at a time", answers.pull, { body: pullInput }),
  e("POST", "/api/sync/push", "Apply a batch of the phone's outbox", answers.push, { body: pushInput }),
  e("GET", "/api/tray", "The caller's shim tray", answers.tray, { query: pageQuery }),
  e("POST", "/api/tray", "Add shims to the tray", answers.trayItem, { body: trayItemInput, status: 201 }),
  e("PATCH", "/api/tray/{itemId}", "Change a tray item", answers.trayItem, { body: trayItemUpdate }),
  e("DELETE", "/api/tray/{itemId}", "Remove a tray item", noContent),
];
