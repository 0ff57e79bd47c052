import { describe, expect, it } from "vitest";
import { isChunkLoadError } from "@/lib/offline/chunk-error";

describe("a piece of the app's code that failed to load", () => {
  it("is told apart from a fault in the screen, in the words each bundler and browser uses", () => {
    const named = Object.assign(new Error("Failed to load chunk /_next/static/chunks/0a1b.js"), {
      name: "ChunkLoadError",
    });
    expect(isChunkLoadError(named)).toBe(true);
    expect(isChunkLoadError(new Error("Loading chunk 42 failed."))).toBe(true);
    expect(
      isChunkLoadError(new TypeError("Failed to fetch dynamically imported module: /_next/static/chunks/x.js")),
    ).toBe(true);
    expect(isChunkLoadError(new TypeError("Importing a module script failed."))).toBe(true);
    expect(isChunkLoadError(new TypeError("Cannot read properties of undefined (reading 'valve')"))).toBe(false);
    expect(isChunkLoadError(null)).toBe(false);
    expect(isChunkLoadError("Loading chunk 1 failed")).toBe(false);
  });
});
