import fc from "fast-check";

/**
 * Every property-based test runs from a known seed, so a failure can be played again: fast-check
 * prints the seed and the path of a counterexample in its failure message. A test that names its own
 * seed keeps it; LASHWRIGHT_FC_SEED picks another for a wider search.
 */
const seed = Number(process.env.LASHWRIGHT_FC_SEED ?? 20261205);
fc.configureGlobal({ seed });
