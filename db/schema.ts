import { BORROW_STATES } from "../lib/pool/rules";
import { VERDICT_NAMES } from "../lib/check/verdicts";
import { CHECK_STATUSES } from "../lib/schemas/records";
import { ROLES, type Role } from "../lib/roles";
import { LENGTH_UNITS, ODOMETER_UNITS } from "../lib/lash/units";
import { NEAR_SIDES, SHIM_POSITIONS } from "../lib/lash/schemas";
import {
  bigint,
  boolean,
  char,
  decimal,
  index,
  int,
  json,
  mysqlEnum,
  mysqlTable,
  smallint,
  text,
  timestamp,
  uniqueIndex,
  varchar,
} from "drizzle-orm/mysql-core";

/**
 * The whole product's tables. Keys are uuids made in the app (mysql-core has no RETURNING); lengths
 * are millimetres in decimal(8,5), enough for 0.0001 in (0.00254 mm) exactly; every row that the
 * offline clients copy carries `version`, a value of its owner's change counter (owner_versions), so
 * a pull can ask for "everything of mine after N"; deletions leave a row in `tombstones`.
 */

const id = () =>
  char("id", { length: 36 })
    .primaryKey()
    .$defaultFn(() => crypto.randomUUID());
const ref = (name: string) => char(name, { length: 36 });
const mm = (name: string) => decimal(name, { precision: 8, scale: 5, mode: "number" });
const createdAt = () => timestamp("created_at", { fsp: 3 }).notNull().defaultNow();
const updatedAt = () => timestamp("updated_at", { fsp: 3 }).notNull().defaultNow().onUpdateNow();
const version = () => bigint("version", { mode: "number", unsigned: true }).notNull().default(0);

// the role column's type, for the queries and services that read it (the list is lib's)
export type { Role };

export const users = mysqlTable(
  "users",
  {
    id: id(),
    email: varchar("email", { length: 254 }).notNull(),
    name: varchar("name", { length: 120 }).notNull(),
    passwordHash: varchar("password_hash", { length: 100 }),
    emailVerifiedAt: timestamp("email_verified_at", { fsp: 3 }),
    displayUnit: mysqlEnum("display_unit", LENGTH_UNITS).notNull().default("mm"),
    noticesByEmail: boolean("notices_by_email").notNull().default(true),
    /** raised at sign-out: tokens minted under an older generation stop working at once */
    sessionGeneration: int("session_generation").notNull().default(0),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [uniqueIndex("users_email_uq").on(t.email)],
);

export const clubs = mysqlTable("clubs", {
  id: id(),
  name: varchar("name", { length: 120 }).notNull(),
  /** null once that account is deleted (the club stays with its other admins) */
  createdBy: ref("created_by").references(() => users.id, { onDelete: "set null" }),
  /**
   * Raised by every change of the club's roles. Removing an admin counts the others; on a
   * multi-primary cluster a lock taken on one node does not stop a writer on another, so two such
   * changes must both write this row for the cluster to let only one of them commit.
   */
  roleChanges: int("role_changes").notNull().default(0),
  createdAt: createdAt(),
  updatedAt: updatedAt(),
});

/** One row per role a user holds in a club: a mentor is usually a mechanic too. */
export const memberships = mysqlTable(
  "memberships",
  {
    id: id(),
    clubId: ref("club_id")
      .notNull()
      .references(() => clubs.id, { onDelete: "cascade" }),
    userId: ref("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    role: mysqlEnum("role", ROLES).notNull(),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex("memberships_club_user_role_uq").on(t.clubId, t.userId, t.role),
    index("memberships_user_idx").on(t.userId),
  ],
);

export const invites = mysqlTable(
  "invites",
  {
    id: id(),
    clubId: ref("club_id")
      .notNull()
      .references(() => clubs.id, { onDelete: "cascade" }),
    email: varchar("email", { length: 254 }).notNull(),
    role: mysqlEnum("role", ROLES).notNull().default("mechanic"),
    tokenHash: char("token_hash", { length: 64 }).notNull(),
    /** null once that account is deleted (its pending invitations are withdrawn first) */
    invitedBy: ref("invited_by").references(() => users.id, { onDelete: "set null" }),
    expiresAt: timestamp("expires_at", { fsp: 3 }).notNull(),
    acceptedAt: timestamp("accepted_at", { fsp: 3 }),
    /** withdrawn by an admin, or ended because the admin who sent it lost the role */
    withdrawnAt: timestamp("withdrawn_at", { fsp: 3 }),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("invites_token_uq").on(t.tokenHash), index("invites_club_idx").on(t.clubId)],
);

export const clubLogActions = [
  "roles-changed",
  "invite-sent",
  "invite-withdrawn",
  "invite-accepted",
  "invites-ended",
] as const;

/** Who changed what in a club: roles, invitations. Read by the club's admins; never edited. */
export const clubLog = mysqlTable(
  "club_log",
  {
    id: id(),
    clubId: ref("club_id")
      .notNull()
      .references(() => clubs.id, { onDelete: "cascade" }),
    /** who did it; null once that account is deleted */
    actorId: ref("actor_id").references(() => users.id, { onDelete: "set null" }),
    action: mysqlEnum("action", clubLogActions).notNull(),
    /** the member or invited address concerned */
    subjectUserId: ref("subject_user_id").references(() => users.id, { onDelete: "set null" }),
    subjectEmail: varchar("subject_email", { length: 254 }),
    /** roles before and after, or the invited role */
    detail: varchar("detail", { length: 200 }).notNull().default(""),
    at: timestamp("at", { fsp: 3 }).notNull().defaultNow(),
    /** the order of entries, also of two written in the same millisecond */
    seq: bigint("seq", { mode: "number", unsigned: true }).autoincrement().notNull(),
  },
  (t) => [index("club_log_club_seq_idx").on(t.clubId, t.seq), uniqueIndex("club_log_seq_uq").on(t.seq)],
);

/** One-time tokens for e-mail verification, password reset and e-mail sign-in links (hashed). */
export const authTokens = mysqlTable(
  "auth_tokens",
  {
    id: id(),
    userId: ref("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    /** "delete": the mailed confirmation that deletes an account without a password */
    purpose: mysqlEnum("purpose", ["verify", "reset", "signin", "delete"]).notNull(),
    tokenHash: char("token_hash", { length: 64 }).notNull(),
    expiresAt: timestamp("expires_at", { fsp: 3 }).notNull(),
    usedAt: timestamp("used_at", { fsp: 3 }),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("auth_tokens_hash_uq").on(t.tokenHash)],
);

/** Failed sign-ins per account and per address, kept in the database so a restart forgets nothing. */
/**
 * Budgets counted by rate-limiter-flexible's MySQL store (server/budgets.ts): its own row shape
 * (key, points, expire in epoch ms), created here so the app's database user needs no CREATE right.
 */
export const rateLimits = mysqlTable("rate_limits", {
  key: varchar("key", { length: 255 }).primaryKey(),
  points: int("points").notNull().default(0),
  expire: bigint("expire", { mode: "number", unsigned: true }),
});

export const engines = mysqlTable(
  "engines",
  {
    id: id(),
    ownerId: ref("owner_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    name: varchar("name", { length: 120 }).notNull(),
    cylinders: smallint("cylinders").notNull(),
    intakePerCylinder: smallint("intake_per_cylinder").notNull(),
    exhaustPerCylinder: smallint("exhaust_per_cylinder").notNull(),
    firingOrder: json("firing_order").$type<number[]>().notNull(),
    firingAngles: json("firing_angles").$type<number[] | null>(),
    ivo: smallint("ivo").notNull().default(20),
    ivc: smallint("ivc").notNull().default(50),
    evo: smallint("evo").notNull().default(50),
    evc: smallint("evc").notNull().default(20),
    intakeMin: mm("intake_min").notNull(),
    intakeMax: mm("intake_max").notNull(),
    intakeTarget: mm("intake_target"),
    exhaustMin: mm("exhaust_min").notNull(),
    exhaustMax: mm("exhaust_max").notNull(),
    exhaustTarget: mm("exhaust_target"),
    measuredHot: boolean("measured_hot").notNull().default(false),
    shimMin: mm("shim_min"),
    shimMax: mm("shim_max"),
    shimStep: mm("shim_step"),
    shimSizes: json("shim_sizes").$type<number[] | null>(),
    shimDiameter: mm("shim_diameter"),
    assembledShim: mm("assembled_shim"),
    displayUnit: mysqlEnum("display_unit", LENGTH_UNITS).notNull().default("mm"),
    odometerUnit: mysqlEnum("odometer_unit", ODOMETER_UNITS).notNull().default("km"),
    mirrored: boolean("mirrored").notNull().default(false),
    /** where the shims sit, over or under the bucket; null: not said (an engine from before it was asked) */
    shimPosition: mysqlEnum("shim_position", SHIM_POSITIONS),
    /** the side nearest the mechanic at the bench, drawn at the bottom; an engine from before it was asked: the exhausts, as drawn then */
    nearSide: mysqlEnum("near_side", NEAR_SIDES).notNull().default("exhaust"),
    version: version(),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [index("engines_owner_idx").on(t.ownerId, t.version)],
);

export const checks = mysqlTable(
  "checks",
  {
    id: id(),
    engineId: ref("engine_id")
      .notNull()
      .references(() => engines.id, { onDelete: "cascade" }),
    ownerId: ref("owner_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    odometer: decimal("odometer", { precision: 10, scale: 1, mode: "number" }).notNull(),
    measuredHot: boolean("measured_hot").notNull().default(false),
    status: mysqlEnum("status", CHECK_STATUSES).notNull().default("measuring"),
    notes: text("notes"),
    startedAt: timestamp("started_at", { fsp: 3 }).notNull().defaultNow(),
    closedAt: timestamp("closed_at", { fsp: 3 }),
    version: version(),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [index("checks_engine_idx").on(t.engineId, t.startedAt), index("checks_owner_idx").on(t.ownerId, t.version)],
);

/**
 * One valve's record in a check. `valve` names the valve ("I1.2" = intake, cylinder 1, second
 * valve) and `round` counts re-measures (0 is the first measurement). The feeler pair is stored, not
 * only the number, so a reviewer sees how the value was found.
 */
export const readings = mysqlTable(
  "readings",
  {
    id: id(),
    checkId: ref("check_id")
      .notNull()
      .references(() => checks.id, { onDelete: "cascade" }),
    ownerId: ref("owner_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    valve: varchar("valve", { length: 16 }).notNull(),
    round: smallint("round").notNull().default(0),
    installedStamp: mm("installed_stamp"),
    installedMicrometer: mm("installed_micrometer"),
    feelerGo: mm("feeler_go"),
    feelerNoGo: mm("feeler_no_go"),
    measured: mm("measured"),
    method: mysqlEnum("method", ["feeler", "typed"]).notNull().default("feeler"),
    fittedShim: mm("fitted_shim"),
    fittedAt: timestamp("fitted_at", { fsp: 3 }),
    version: version(),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [
    uniqueIndex("readings_check_valve_round_uq").on(t.checkId, t.valve, t.round),
    index("readings_owner_idx").on(t.ownerId, t.version),
  ],
);

/** Earlier values of a reading overwritten by a later write (two devices, or a correction). */
export const readingHistory = mysqlTable(
  "reading_history",
  {
    id: id(),
    readingId: ref("reading_id")
      .notNull()
      .references(() => readings.id, { onDelete: "cascade" }),
    previous: json("previous").$type<Record<string, unknown>>().notNull(),
    replacedAt: timestamp("replaced_at", { fsp: 3 }).notNull().defaultNow(),
  },
  (t) => [index("reading_history_reading_idx").on(t.readingId)],
);

export const trayItems = mysqlTable(
  "tray_items",
  {
    id: id(),
    ownerId: ref("owner_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    size: mm("size").notNull(),
    measuredSize: boolean("measured_size").notNull().default(false),
    count: int("count").notNull().default(0),
    shimDiameter: mm("shim_diameter"),
    version: version(),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [index("tray_items_owner_idx").on(t.ownerId, t.version)],
);

export const verdicts = VERDICT_NAMES;

/** Spare shims a member offers to lend to one club; the count goes down as they are handed over. */
export const poolOffers = mysqlTable(
  "pool_offers",
  {
    id: id(),
    clubId: ref("club_id")
      .notNull()
      .references(() => clubs.id, { onDelete: "cascade" }),
    ownerId: ref("owner_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    size: mm("size").notNull(),
    measuredSize: boolean("measured_size").notNull().default(false),
    count: int("count").notNull(),
    shimDiameter: mm("shim_diameter"),
    note: varchar("note", { length: 200 }),
    withdrawnAt: timestamp("withdrawn_at", { fsp: 3 }),
    /** raised by every request for these shims: the row write that decides a race for the last one across nodes */
    asks: int("asks").notNull().default(0),
    version: version(),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [index("pool_offers_club_idx").on(t.clubId, t.withdrawnAt), index("pool_offers_owner_idx").on(t.ownerId)],
);

export const borrowRequests = mysqlTable(
  "borrow_requests",
  {
    id: id(),
    offerId: ref("offer_id")
      .notNull()
      .references(() => poolOffers.id, { onDelete: "cascade" }),
    borrowerId: ref("borrower_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    lenderId: ref("lender_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    checkId: ref("check_id").references(() => checks.id, { onDelete: "set null" }),
    size: mm("size").notNull(),
    count: int("count").notNull(),
    // the states of a loan, in our own words (lib/pool/rules.ts has the moves between them)
    state: mysqlEnum("state", BORROW_STATES).notNull().default("asked"),
    /** what comes back: the same size, or other shims in exchange */
    returnSize: mm("return_size"),
    version: version(),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [
    index("borrow_requests_offer_idx").on(t.offerId, t.state),
    index("borrow_requests_borrower_idx").on(t.borrowerId),
    index("borrow_requests_lender_idx").on(t.lenderId),
  ],
);

export const shares = mysqlTable(
  "shares",
  {
    id: id(),
    checkId: ref("check_id")
      .notNull()
      .references(() => checks.id, { onDelete: "cascade" }),
    clubId: ref("club_id")
      .notNull()
      .references(() => clubs.id, { onDelete: "cascade" }),
    sharedBy: ref("shared_by")
      .notNull()
      .references(() => users.id),
    verdict: mysqlEnum("verdict", verdicts),
    /** null once the mentor's account is deleted: the verdict stays, from "a former member" */
    verdictBy: ref("verdict_by").references(() => users.id, { onDelete: "set null" }),
    verdictAt: timestamp("verdict_at", { fsp: 3 }),
    withdrawnAt: timestamp("withdrawn_at", { fsp: 3 }),
    version: version(),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [
    uniqueIndex("shares_check_club_uq").on(t.checkId, t.clubId),
    index("shares_club_idx").on(t.clubId, t.createdAt),
  ],
);

export const comments = mysqlTable(
  "comments",
  {
    id: id(),
    checkId: ref("check_id")
      .notNull()
      .references(() => checks.id, { onDelete: "cascade" }),
    /** null once the author's account is deleted: the comment stays on the check, from "a former member" */
    authorId: ref("author_id").references(() => users.id, { onDelete: "set null" }),
    /**
     * The club whose thread a mentor's comment belongs to (null for the owner's, seen by every club
     * the check is shared with): a check shared with two clubs has one thread per club
     * (server/access.ts visibleComments).
     */
    clubId: ref("club_id").references(() => clubs.id, { onDelete: "set null" }),
    valve: varchar("valve", { length: 16 }),
    body: text("body").notNull(),
    version: version(),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [index("comments_check_idx").on(t.checkId, t.createdAt)],
);

export const uploads = mysqlTable(
  "uploads",
  {
    id: id(),
    ownerId: ref("owner_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    checkId: ref("check_id")
      .notNull()
      .references(() => checks.id, { onDelete: "cascade" }),
    readingId: ref("reading_id").references(() => readings.id, { onDelete: "set null" }),
    commentId: ref("comment_id").references(() => comments.id, { onDelete: "set null" }),
    /** the valve the photo shows (blade in its gap, its shim), or null for the whole check */
    valve: varchar("valve", { length: 16 }),
    objectKey: varchar("object_key", { length: 200 }).notNull(),
    contentType: varchar("content_type", { length: 60 }).notNull(),
    bytes: int("bytes").notNull(),
    width: smallint("width"),
    height: smallint("height"),
    /**
     * When the object store had the bytes. The row is written first (it claims the id) and the bytes
     * after it, so a row without this is an upload still in flight or cut off: its retry completes it.
     */
    storedAt: timestamp("stored_at", { fsp: 3 }),
    version: version(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("uploads_key_uq").on(t.objectKey), index("uploads_check_idx").on(t.checkId)],
);

/** Each installed copy of the app; the last mutation id it had applied makes pushes idempotent. */
export const syncClients = mysqlTable(
  "sync_clients",
  {
    id: char("id", { length: 36 }).primaryKey(),
    userId: ref("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    lastMutationId: bigint("last_mutation_id", { mode: "number", unsigned: true }).notNull().default(0),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [index("sync_clients_user_idx").on(t.userId)],
);

/** Mutations the server refused, with the reason, so the client can show them. */
export const rejectedMutations = mysqlTable(
  "rejected_mutations",
  {
    id: id(),
    clientId: char("client_id", { length: 36 })
      .notNull()
      .references(() => syncClients.id, { onDelete: "cascade" }),
    mutationId: bigint("mutation_id", { mode: "number", unsigned: true }).notNull(),
    name: varchar("name", { length: 60 }).notNull(),
    reason: varchar("reason", { length: 500 }).notNull(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("rejected_client_mutation_uq").on(t.clientId, t.mutationId)],
);

/**
 * One change counter per owner of synced rows (db/versions.ts). A write raises its owner's counter
 * in its own transaction and stamps the rows it changes with the new value; a pull returns the
 * owner's rows stamped above the phone's cursor. On a multi-primary cluster two writers of one
 * owner both write this row, so the cluster lets only one of them commit and the other retries.
 */
export const ownerVersions = mysqlTable("owner_versions", {
  ownerId: char("owner_id", { length: 36 }).primaryKey(),
  version: bigint("version", { mode: "number", unsigned: true }).notNull().default(0),
});

export const tombstones = mysqlTable(
  "tombstones",
  {
    id: id(),
    entity: varchar("entity", { length: 30 }).notNull(),
    entityId: char("entity_id", { length: 36 }).notNull(),
    ownerId: ref("owner_id").notNull(),
    version: version(),
    createdAt: createdAt(),
  },
  (t) => [index("tombstones_owner_idx").on(t.ownerId, t.version)],
);

/** E-mail notices wait here, so sending never blocks or fails the request that caused them. */
export const notices = mysqlTable(
  "notices",
  {
    id: id(),
    toUserId: ref("to_user_id").references(() => users.id, { onDelete: "cascade" }),
    toEmail: varchar("to_email", { length: 254 }).notNull(),
    kind: varchar("kind", { length: 40 }).notNull(),
    subject: varchar("subject", { length: 200 }).notNull(),
    body: text("body").notNull(),
    /** the check a notice is about: at send time the recipient must still be able to read it */
    aboutCheckId: ref("about_check_id").references(() => checks.id, { onDelete: "cascade" }),
    /** dropped: not sent, because the recipient lost access or the address has no account */
    status: mysqlEnum("status", ["queued", "sending", "sent", "failed", "dropped"]).notNull().default("queued"),
    claimToken: char("claim_token", { length: 36 }),
    claimedUntil: timestamp("claimed_until", { fsp: 3 }),
    attempts: smallint("attempts").notNull().default(0),
    nextAttemptAt: timestamp("next_attempt_at", { fsp: 3 }).notNull().defaultNow(),
    lastError: varchar("last_error", { length: 500 }),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [
    index("notices_status_next_idx").on(t.status, t.nextAttemptAt),
    // a digest gathers every queued notice of one address: found by address, not by scanning the queue
    index("notices_to_status_idx").on(t.toEmail, t.status),
    // the rows of one claim are read back by its token: without an index, every claim read the whole queue
    index("notices_claim_idx").on(t.claimToken),
  ],
);

/**
 * Addresses with no account whose owner pressed "unsubscribe" in a mail (an invitation): nothing but
 * account mail (a link they asked for) goes to them again. An account holder's choice is
 * users.notices_by_email instead, which the account page can turn back on (RFC 8058).
 */
export const mailStops = mysqlTable("mail_stops", {
  email: varchar("email", { length: 254 }).primaryKey(),
  createdAt: createdAt(),
});

/**
 * Objects the photo store must lose: written in the transaction that deletes their rows (an
 * account's deletion), removed one by one by the background sweep (server/object-deletions.ts),
 * each retried with a growing wait until the store confirms it. A store that is down keeps them here.
 */
export const objectDeletions = mysqlTable(
  "object_deletions",
  {
    objectKey: varchar("object_key", { length: 200 }).primaryKey(),
    attempts: int("attempts").notNull().default(0),
    nextAttemptAt: timestamp("next_attempt_at", { fsp: 3 }).notNull().defaultNow(),
    lastError: varchar("last_error", { length: 500 }),
    createdAt: createdAt(),
  },
  (t) => [index("object_deletions_next_idx").on(t.nextAttemptAt)],
);

/*
 * What a select of a table gives, named once here for the queries and services that pass rows around
 * (derived, so a new column is in them at once); a function that needs a few columns takes a Pick.
 */
export type UserRow = typeof users.$inferSelect;
export type EngineRow = typeof engines.$inferSelect;
export type CheckRow = typeof checks.$inferSelect;
export type ReadingRow = typeof readings.$inferSelect;
export type TrayItemRow = typeof trayItems.$inferSelect;
export type BorrowRequestRow = typeof borrowRequests.$inferSelect;
export type ShareRow = typeof shares.$inferSelect;
export type CommentRow = typeof comments.$inferSelect;
export type UploadRow = typeof uploads.$inferSelect;
export type NoticeRow = typeof notices.$inferSelect;
