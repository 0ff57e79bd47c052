import "server-only";
import { createHmac, timingSafeEqual } from "node:crypto";
import { once } from "node:events";
import { PassThrough, Readable } from "node:stream";
import { finished, pipeline } from "node:stream/promises";
import yazl from "yazl";
import { DomainError } from "@/lib/errors";
import * as exportFile from "@/lib/export/schema";
import type { ExportCheck, ExportDocument, ExportEngine, ExportReading, ExportTrayItem } from "@/lib/export/schema";
import { pick } from "@/lib/pick";
import { CHECK_PLAIN_FIELDS } from "@/lib/schemas/records";
import { engineToApi } from "@/db/queries/garage";
import { getPublicUser } from "@/db/queries/users";
import * as q from "@/db/queries/account-export";
import type { BorrowRequestRow, CheckRow, CommentRow, EngineRow, ReadingRow, UploadRow } from "@/db/schema";
import { budget } from "./budgets";
import { spendHourly } from "./spend-hourly";
import { getObjectStream } from "./storage";
import type { SessionUser } from "./auth";

/**
 * The account export (GDPR article 20, portability): one zip streamed while it is written. The rows
 * are read a page at a time and each photo is piped from the object store as its turn comes, so
 * memory holds one page, one check's readings and one photo's chunks, plus the ids of the engines
 * and checks (to keep every reference in the file pointing at a record in it) whatever the years of
 * history. Nothing waits on a slow download but the stream itself: no connection or transaction is
 * held between pages.
 */

/**
 * Exports one account may make in an hour: 4. Each reads every row of the account and every photo
 * from the store (OWASP ASVS 5.0 2.4.1, anti-automation of costly work); a person wants one, and a
 * retry after a lost download or two.
 */
const exportBudget = () => budget({ name: "export:account", points: 4, seconds: 3600 });

const TICKET_SECONDS = 120;
let keyFor: { secret: string; key: Buffer } | undefined;
async function ticketKey(): Promise<Buffer> {
  const { authOptions } = await import("./auth"); // the one place the secret (and its development stand-in) is chosen
  const secret = authOptions.secret;
  if (!secret) throw new Error("no secret to sign export tickets with");
  if (keyFor?.secret !== secret)
    keyFor = { secret, key: createHmac("sha256", secret).update("lashwright export ticket v1").digest() };
  return keyFor.key;
}
const mac = (key: Buffer, body: string) => createHmac("sha256", key).update(body).digest("base64url");

/**
 * Spend one export and answer with a short-lived ticket for the download. The download itself is a
 * plain navigation (the browser writes it to disk as it arrives, where a fetch would hold it all in
 * the page's memory), and the ticket is what lets a refusal be said on the page first.
 */
export async function startExport(user: SessionUser): Promise<{ href: string; fileName: string }> {
  await spendHourly(
    exportBudget(),
    user.id,
    (n, wait) => `You have made ${n} exports in the last hour, the most an hour allows: try again in ${wait}.`,
  );
  const until = Math.floor(Date.now() / 1000) + TICKET_SECONDS;
  const body = `${user.id}.${until.toString(36)}`;
  const ticket = `${until.toString(36)}.${mac(await ticketKey(), body)}`;
  return { href: `/api/account/export?ticket=${ticket}`, fileName: exportFile.exportFileName(new Date(), "server") };
}

/** A ticket is good for its signer's session only, and for two minutes (a link that leaks is soon worthless). */
async function ticketValid(user: SessionUser, ticket: string): Promise<boolean> {
  const [untilText, given] = ticket.split(".");
  if (!untilText || !given) return false;
  const until = parseInt(untilText, 36);
  if (!(until > Date.now() / 1000) || until > Date.now() / 1000 + TICKET_SECONDS + 5) return false;
  const want = Buffer.from(mac(await ticketKey(), `${user.id}.${untilText}`));
  const got = Buffer.from(given);
  return got.length === want.length && timingSafeEqual(got, want);
}

export async function openExport(user: SessionUser, ticket: string): Promise<Response> {
  if (!(await ticketValid(user, ticket)))
    throw new DomainError("bad_request", "This download link has expired: press Export again", {
      code: "ticket_expired",
    });
  const at = new Date();
  const zip = new yazl.ZipFile();
  const out = zip.outputStream as Readable;
  const stop = new AbortController();
  out.once("close", () => stop.abort());
  void writeZip(zip, user, at, stop.signal).catch((e: unknown) => {
    if (!stop.signal.aborted) console.error("[export] failed:", e instanceof Error ? e.message : e);
    // a cut-off zip has no central directory: it is refused as damaged, never read as complete
    out.destroy(e instanceof Error ? e : new Error(String(e)));
  });
  const fileName = exportFile.exportFileName(at, "server");
  return new Response(Readable.toWeb(out) as ReadableStream, {
    headers: {
      "Content-Type": "application/zip",
      "Content-Disposition": `attachment; filename="${fileName}"`,
      "Cache-Control": "no-store",
      "X-Content-Type-Options": "nosniff",
    },
  });
}

/** One entry: added, filled as the zip reads it (back-pressure from the download), and read to its end before the next. */
async function entry(
  zip: yazl.ZipFile,
  name: string,
  opts: { mtime: Date; compress: boolean },
  signal: AbortSignal,
  fill: (write: (chunk: string | Buffer) => Promise<void>, sink: PassThrough) => Promise<void>,
) {
  const sink = new PassThrough();
  const read = finished(sink, { signal });
  zip.addReadStream(sink, name, opts);
  await fill(async (chunk) => {
    if (!sink.write(chunk)) await once(sink, "drain", { signal });
  }, sink);
  if (!sink.writableEnded) sink.end();
  await read;
}

const isoOf = (d: Date | null) => (d ? d.toISOString() : null);

export function engineOut(e: EngineRow): ExportEngine {
  const out: Partial<ReturnType<typeof engineToApi>> = engineToApi(e);
  delete out.version;
  delete out.updatedAt;
  return out as ExportEngine;
}

const checkOut = (c: CheckRow): ExportCheck => ({
  ...pick(c, CHECK_PLAIN_FIELDS),
  startedAt: c.startedAt.toISOString(),
  closedAt: isoOf(c.closedAt),
});

const readingOut = (r: ReadingRow): ExportReading => exportFile.readingForFile(r, isoOf(r.fittedAt));

const commentOut = (c: CommentRow) => ({
  id: c.id,
  checkId: c.checkId,
  valve: c.valve,
  body: c.body,
  createdAt: c.createdAt.toISOString(),
});

const photoOut = (p: UploadRow, userId: string) => ({
  id: p.id,
  checkId: p.checkId,
  valve: p.valve,
  commentId: p.commentId,
  contentType: p.contentType,
  bytes: p.bytes,
  width: p.width,
  height: p.height,
  createdAt: p.createdAt.toISOString(),
  byMe: p.ownerId === userId,
  file: exportFile.photoEntryName(p.id),
});

const loanOut = (l: BorrowRequestRow, userId: string) => ({
  id: l.id,
  role: l.borrowerId === userId ? ("borrower" as const) : ("lender" as const),
  size: l.size,
  count: l.count,
  state: l.state,
  returnSize: l.returnSize,
  checkId: l.checkId,
  createdAt: l.createdAt.toISOString(),
  updatedAt: l.updatedAt.toISOString(),
});

type Write = (chunk: string | Buffer) => Promise<void>;

/** A JSON array written item by item. */
async function array<T>(write: Write, key: keyof ExportDocument, items: AsyncIterable<T> | Iterable<T>, first = false) {
  await write(`${first ? "" : ","}\n${JSON.stringify(key)}:[`);
  let n = 0;
  for await (const item of items) await write(`${n++ ? "," : ""}\n${JSON.stringify(item)}`);
  await write("]");
}

async function writeZip(zip: yazl.ZipFile, user: SessionUser, at: Date, signal: AbortSignal) {
  const opts = { mtime: at, compress: true };
  const account = await getPublicUser(user.id);
  const tray: ExportTrayItem[] = [];
  for await (const t of q.pages(
    (after) => q.trayPage(user.id, after),
    (t) => t.id,
  ))
    tray.push({ id: t.id, size: t.size, measuredSize: t.measuredSize, count: t.count, shimDiameter: t.shimDiameter });
  // the engines, and each one's checks (ids, dates, odometers): what every later part refers to
  const engineList: ExportEngine[] = [];
  for await (const e of q.pages(
    (after) => q.enginePage(user.id, after),
    (e) => e.id,
  ))
    engineList.push(engineOut(e));
  const checksOf = new Map<string, ExportCheck[]>();
  const checkIds = new Set<string>();
  for (const e of engineList) {
    const list: ExportCheck[] = [];
    for await (const c of q.pages(
      (after) => q.checkPage(user.id, e.id, after),
      (c) => c.id,
    )) {
      list.push(checkOut(c));
      checkIds.add(c.id);
    }
    list.sort((a, b) => a.startedAt.localeCompare(b.startedAt) || a.id.localeCompare(b.id));
    checksOf.set(e.id, list);
  }

  /** Each check with its readings and the previous check's, one check at a time. */
  async function* eachCheck() {
    for (const e of engineList) {
      const list = checksOf.get(e.id)!;
      const readingsOf = new Map<string, ExportReading[]>();
      for (const c of list) {
        const rs = (await q.readingsOfCheck(user.id, c.id)).map(readingOut);
        const prev = exportFile.previousOf(c, list);
        yield {
          engine: e,
          check: c,
          readings: rs,
          previous: prev
            ? {
                check: prev,
                readings: readingsOf.get(prev.id) ?? (await q.readingsOfCheck(user.id, prev.id)).map(readingOut),
              }
            : null,
        };
        // only the one before is kept: checks are in order of their start
        readingsOf.clear();
        readingsOf.set(c.id, rs);
      }
    }
  }

  await entry(zip, exportFile.EXPORT_DATA_ENTRY, opts, signal, async (write) => {
    const head = exportFile.exportHead(at, "server", account ?? null);
    await write(JSON.stringify(head).slice(0, -1));
    await array(write, "engines", engineList);
    await array(
      write,
      "checks",
      engineList.flatMap((e) => checksOf.get(e.id)!),
    );
    await array(
      write,
      "readings",
      (async function* () {
        for await (const c of eachCheck()) yield* c.readings;
      })(),
    );
    await array(
      write,
      "plans",
      (async function* () {
        for await (const c of eachCheck()) {
          const { plan } = exportFile.checkFiles(c.engine, c.check, c.readings, tray, c.previous);
          if (plan) yield plan;
        }
      })(),
    );
    await array(
      write,
      "comments",
      (async function* () {
        for await (const r of q.pages(
          (after) => q.commentsOnOwnChecksPage(user.id, after),
          (r) => r.c.id,
        ))
          if (checkIds.has(r.c.checkId))
            yield { ...commentOut(r.c), byMe: r.c.authorId === user.id, authorName: r.authorName };
      })(),
    );
    await array(
      write,
      "commentsElsewhere",
      (async function* () {
        for await (const r of q.pages(
          (after) => q.ownCommentsElsewherePage(user.id, after),
          (r) => r.c.id,
        ))
          yield commentOut(r.c);
      })(),
    );
    await array(
      write,
      "photos",
      (async function* () {
        for await (const r of q.pages(
          (after) => q.photoPage(user.id, after),
          (r) => r.p.id,
        ))
          if (checkIds.has(r.p.checkId)) yield photoOut(r.p, user.id);
      })(),
    );
    await array(write, "tray", tray);
    await array(
      write,
      "loans",
      (async function* () {
        for await (const l of q.pages(
          (after) => q.loanPage(user.id, after),
          (l) => l.id,
        ))
          yield loanOut(l, user.id);
      })(),
    );
    await write("\n}\n");
  });

  for await (const c of eachCheck()) {
    const { csvName, csv } = exportFile.checkFiles(c.engine, c.check, c.readings, tray, c.previous);
    await entry(zip, csvName, opts, signal, (write) => write(csv));
  }

  for await (const r of q.pages(
    (after) => q.photoPage(user.id, after),
    (r) => r.p.id,
  )) {
    if (!checkIds.has(r.p.checkId)) continue;
    // JPEG is compressed already: stored as it is, piped from the store as the download takes it
    await entry(
      zip,
      exportFile.photoEntryName(r.p.id),
      { mtime: at, compress: false },
      signal,
      async (_write, sink) => {
        const body = await getObjectStream(r.p.objectKey, signal);
        await pipeline(body, sink, { signal });
      },
    );
  }
  zip.end();
}
