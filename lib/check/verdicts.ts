/** The words of a mentor's verdict: our own, plain, and each with a glyph so colour is not needed. */
export const VERDICTS = {
  "close-up": { word: "Fine to close up", glyph: "✓" },
  "measure-again": { word: "Measure again", glyph: "↻" },
  "stop-and-ask": { word: "Stop and ask", glyph: "⚠" },
} as const;
export type Verdict = keyof typeof VERDICTS;
/** The verdicts' names, in order: the schema, the database column and the screens all take them from here. */
export const VERDICT_NAMES = Object.keys(VERDICTS) as [Verdict, ...Verdict[]];
