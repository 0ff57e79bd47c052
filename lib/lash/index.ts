/** The valve-clearance computation core: pure functions shared by the browser and the server. */
export { LashInputError, parseOrThrow, fieldErrors, issuePath, type LashIssue, type IssueLike } from "./errors";
export {
  inchesToMm,
  mmToInches,
  toNm,
  fromNm,
  compareLengths,
  sameLength,
  roundForDisplay,
  formatLength,
  lengthNumber,
  shimNumber,
  NM_PER_MM,
  MM_PER_INCH,
  LENGTH_UNITS,
  ODOMETER_UNITS,
  type LengthUnit,
  type OdometerUnit,
} from "./units";
export * from "./schemas";
export { clearanceFromFeelers, type Clearance } from "./feeler";
export {
  shimSeries,
  recommendShim,
  bandNm,
  inBand,
  bandSide,
  distanceFromBand,
  type ShimRecommendation,
  type BandNm,
  type BandSide,
} from "./shim";
export {
  planShims,
  samePlan,
  INSTALLED_RANGE_SLACK_MM,
  MAX_LENDERS_TRIED,
  type PlanAim,
  type PlanValve,
  type Assignment,
  type ShimPlan,
  type ShimSource,
  type SizeCount,
} from "./plan";
export {
  rotationGuide,
  onBaseCircle,
  DEFAULT_TIMING,
  DEFAULT_MARGIN,
  type RotationStep,
  type ValveRef,
  type ValveKind,
} from "./rotation";
export {
  driftProjection,
  fastClosingValves,
  roundOdometer,
  t95,
  MIN_TREND_SPAN,
  DEFAULT_RESOLUTION_MM,
  type DriftPoint,
  type DriftResult,
  type DriftVerdict,
  type ValveDrift,
} from "./drift";
export { valveNames, parseValveName, bladesFor, METRIC_BLADES_MM, INCH_BLADES_THOU, type ValveName } from "./valves";
export { ENGINE_PRESETS, type EnginePreset } from "./presets";
export { workOrder, type ShimMove, type Place } from "./work-order";
export { camsOut, camsOutWords, type CamOut } from "./cams";
