import { layout, USUAL_BANDS } from "./engines";

/**
 * The club night's engine and blades, shared by the one-node load test
 * (tests/integration/load/club-night.test.ts) and the cluster's (tests/cluster/club-night.test.ts).
 */
export const CLUB_NIGHT_PASSWORD = "club-night-feelers-25";
// a six-cylinder with two intake and two exhaust valves per cylinder: 24 valves (invented engine)
export const VALVES = ["I", "E"].flatMap((k) => [1, 2, 3, 4, 5, 6].flatMap((c) => [1, 2].map((i) => `${k}${c}.${i}`)));
// blade sizes of a common metric feeler set (from memory)
export const BLADES = [0.05, 0.08, 0.1, 0.13, 0.15, 0.18, 0.2, 0.23, 0.25, 0.28, 0.3, 0.33];
// firing 1-5-3-6-2-4: the usual inline-six order (common practice)
export const ENGINE_SIX = { name: "Club night six", ...layout([1, 5, 3, 6, 2, 4], 2), ...USUAL_BANDS };
