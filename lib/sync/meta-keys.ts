/** Keys of the phone's meta table read by the screens (kept apart from the modules that use Dexie). */
export const USAGE_META = "photoUsage";
