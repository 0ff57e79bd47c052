// Runs once per server instance: retry queued e-mail notices every 15 s.
export async function register() {
  if (process.env.NEXT_RUNTIME !== "nodejs") return;
  const { kickDelivery } = await import("./server/notices");
  const timer = setInterval(kickDelivery, 15_000);
  timer.unref();
}
