import { parseOrThrow, LashInputError } from "./errors";
import { feelerSchema } from "./schemas";
import { toNm, fromNm } from "./units";

export interface Clearance {
  /** the go blade: the thickest that slides with light, even drag */
  min: number;
  /** the no-go blade, or the go blade itself for a direct value */
  max: number;
  /** the working value used in calculations: the go blade */
  value: number;
}

/**
 * Clearance from a feeler result. With a go/no-go pair the clearance lies in [go, noGo); its working
 * value is the go blade (common practice: the reading is the thickest blade that slides).
 */
export function clearanceFromFeelers(input: { go: number; noGo?: number }): Clearance {
  const { go, noGo } = parseOrThrow(feelerSchema, input, "feeler result");
  const goNm = toNm(go);
  if (noGo === undefined) return { min: fromNm(goNm), max: fromNm(goNm), value: fromNm(goNm) };
  const noGoNm = toNm(noGo);
  if (noGoNm <= goNm)
    throw new LashInputError("The no-go blade must be thicker than the go blade", [
      { path: "noGo", message: "must be thicker than the go blade" },
    ]);
  return { min: fromNm(goNm), max: fromNm(noGoNm), value: fromNm(goNm) };
}
