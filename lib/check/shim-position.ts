import type { ShimPosition } from "../lash";

/**
 * What the check's screens ask of the mechanic, by where the engine's shims sit. Each rule says where
 * it comes from: docs/trade.md's "Cautions to show" and "Where the shim sits" (common practice; from
 * memory), and README "Safety". The manual's figures and order govern every one of them.
 */

export const SHIM_POSITION_WORDS: Record<ShimPosition, { short: string; long: string }> = {
  over: {
    short: "Shims over the buckets",
    long: "Shims over the buckets: changed with the cams in, using a bucket tool",
  },
  under: { short: "Shims under the buckets", long: "Shims under the buckets: the cams come out to change them" },
};
export const NOT_SAID = "Where the shims sit is not set";

export const shimPositionWords = (p: ShimPosition | null | undefined) => (p ? SHIM_POSITION_WORDS[p].short : NOT_SAID);

/** The manual's word on everything: README "Safety". */
const MANUAL_LAST = "The service manual has the last word on figures, torques and method";

/** Prepare's tick list. The first four hold for every engine (docs/trade.md, cautions to show: common practice). */
export function prepareCautions(position: ShimPosition | null | undefined): string[] {
  const common = [
    "Engine cold (unless the manual's spec is hot)",
    "Ignition off and battery disconnected",
    "Plugs out; turn the crank by hand, in its normal direction only",
    "Rag in the cam-chain tunnel and drain-backs so nothing can drop in",
  ];
  if (position === "over")
    // the bucket tool holds the bucket down while the cam stays in (common practice; from memory)
    return [...common, "Magnet ready for lifting shims; the bucket tool for this engine at hand", MANUAL_LAST];
  if (position === "under")
    return [
      ...common,
      "Magnet ready for lifting shims",
      // the cams come out: caps loosened and torqued in the manual's order and figure (common practice; from memory)
      "Torque wrench, and the manual's cam-cap order and torque figures, at hand",
      // the chain or belt and sprockets are marked before the cams come out (common practice; from memory)
      "Paint pen or scribe to mark the cam chain (or belt) and sprockets",
      MANUAL_LAST,
    ];
  // not said: what holds for both kinds
  return [...common, "Magnet ready for lifting shims", MANUAL_LAST];
}

export interface FitTask {
  key: "timing" | "mark" | "cams-out" | "swap" | "cams-in" | "torque" | "turn";
  /** what to do, as the tick's words */
  task: string;
  /** shown beside the tick */
  cautions: string[];
}

const GOVERN = "The manual's figures and order govern.";
const NEVER_TURN = "Never turn the engine with a cam cap loose.";
const PISTON = "A valve can hit a piston if the timing is wrong.";

/**
 * The under-bucket fit, in working order (docs/trade.md "Where the shim sits": common practice; from
 * memory). The swap list is worked at "swap", with the cams out. Nothing here replaces the manual:
 * its timing position, cap order and torque figure are the ones to use.
 */
export const UNDER_BUCKET_FIT: FitTask[] = [
  {
    key: "timing",
    task: "Turn the crank by hand to the timing position the manual gives for taking the cams out",
    cautions: [GOVERN],
  },
  {
    key: "mark",
    task: "Mark the cam chain (or belt) and the sprockets against each other and the head",
    cautions: [PISTON, "The marks are how the cams go back in time: make them where you can see them."],
  },
  // release the tensioner as the manual says before the caps come off (common practice; from memory)
  {
    key: "cams-out",
    task: "Take out the cams named above: release the chain tensioner as the manual says, then loosen the cam caps evenly, a little at a time, in the manual's order",
    cautions: [GOVERN, NEVER_TURN, "Keep each cap in its own place and the right way round."],
  },
  {
    key: "swap",
    task: "Swap the shims with the swap list",
    cautions: [NEVER_TURN, "Lift shims with the magnet; never stack two; each bucket back in its own bore."],
  },
  {
    key: "cams-in",
    task: "Oil the lobes and journals, refit the cams with the marks aligned",
    cautions: [PISTON, "Check every mark before a cap goes on."],
  },
  {
    key: "torque",
    task: "Fit the caps in their own places and torque them evenly to the manual's figure; set the chain tensioner",
    cautions: [GOVERN, NEVER_TURN],
  },
  // two turns bring the crank and cams back to the same marks (720 crank degrees, docs/trade.md: common practice)
  {
    key: "turn",
    task: "Turn the crank two full turns by hand and check the marks line up again before re-measuring",
    cautions: [PISTON, "If it binds, stop: do not force it. If the marks do not line up, the cams come out again."],
  },
];

/**
 * The over-bucket method, for each valve on the swap list (docs/trade.md "Where the shim sits": common
 * practice; from memory). The cams stay in.
 */
export const OVER_BUCKET_METHOD = [
  "Turn the crank by hand until the lobe over the valve points away from the bucket",
  "Turn the bucket so its notch sits where the shim can be lifted",
  "Hold the bucket down with the bucket tool",
  "Lift the shim out with the magnet",
  // the number away from the lobe, so the cam does not wear it off (common practice)
  "Fit the new shim with its number face down, into the bucket; the plain face meets the cam",
];

export const OVER_BUCKET_CAUTIONS = [
  // a crank turned with the tool in place can catch the lobe (common practice; from memory)
  "Take the bucket tool out before turning the crank again.",
  "Never stack two shims.",
  GOVERN,
];

/** Re-check after an under-bucket fit: the two-turn check comes before the first reading (common practice). */
export const RECHECK_TURN = "Crank turned two full turns by hand, and the timing marks line up again";
export const RECHECK_TURN_CAUTION = PISTON + " If the marks do not line up, stop: do not start the engine.";
