// Runs once per server instance, before Next hands any request to a handler: note each request's
// socket address, drain on SIGTERM, give each request an id and a log line, serve the metrics
// (METRICS_PORT), and retry queued e-mail notices (every 15 s, sooner if retries are).
export async function register() {
  if (process.env.NEXT_RUNTIME !== "nodejs") return;
  // first: every request after this knows its socket's address (limits per network address)
  const { installPeerAddress } = await import("./server/peer-address");
  installPeerAddress();
  // SIGTERM: not ready at once, then finish what is in flight and exit within a bound
  const { installDrain } = await import("./server/drain");
  installDrain();
  // every request gets an id, a log line and its time in the metrics; the metrics on their own port
  const { installRequestContext, UNLOGGED } = await import("./server/request-context");
  installRequestContext();
  const { startMetricsServer } = await import("./server/metrics");
  await startMetricsServer(UNLOGGED);
  const { kickDelivery } = await import("./server/notices");
  const every = Math.min(15, Number(process.env.NOTICE_RETRY_SECONDS ?? 30) || 30) * 1000;
  const timer = setInterval(kickDelivery, every);
  timer.unref();
  // photos left behind by an upload that died half-way, or a deletion whose sweep failed
  const { kickPhotoSweep } = await import("./server/photos");
  setInterval(() => void kickPhotoSweep(), 10 * 60_000).unref();
  // a deleted account's photos, until the store has removed every one (server/object-deletions.ts)
  const { kickObjectDeletions } = await import("./server/object-deletions");
  setInterval(
    kickObjectDeletions,
    Math.min(60, Number(process.env.OBJECT_DELETE_RETRY_SECONDS ?? 30) || 30) * 1000,
  ).unref();
}
