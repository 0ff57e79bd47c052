/**
 * Whether an error is the browser failing to load a piece of the app's own code (a step loaded
 * when first shown, after a deploy removed it or with no signal and no kept copy). It names no
 * fault in the mechanic's work: the work is in the phone's database, and a reload loads the
 * current build, whose code the worker keeps.
 */
export function isChunkLoadError(e: unknown): boolean {
  if (!e || typeof e !== "object") return false;
  const { name, message } = e as { name?: unknown; message?: unknown };
  if (name === "ChunkLoadError") return true;
  return (
    typeof message === "string" &&
    /Loading chunk|Failed to load chunk|Failed to fetch dynamically imported module|error loading dynamically imported module|Importing a module script failed/i.test(
      message,
    )
  );
}
