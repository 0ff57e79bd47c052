/**
 * A still picture of the engine diagram for the home page: four cylinders side by side, intakes on
 * the top edge and exhausts on the bottom, each valve a cell with a glyph and a word for its state.
 */
type State = "ok" | "tight" | "loose";

const cells: { cyl: number; side: "in" | "ex"; states: [State, State] }[] = [
  { cyl: 1, side: "in", states: ["ok", "ok"] },
  { cyl: 2, side: "in", states: ["ok", "tight"] },
  { cyl: 3, side: "in", states: ["ok", "ok"] },
  { cyl: 4, side: "in", states: ["loose", "ok"] },
  { cyl: 1, side: "ex", states: ["ok", "ok"] },
  { cyl: 2, side: "ex", states: ["ok", "ok"] },
  { cyl: 3, side: "ex", states: ["tight", "ok"] },
  { cyl: 4, side: "ex", states: ["ok", "ok"] },
];

const glyph: Record<State, string> = { ok: "✓", tight: "▼", loose: "▲" };
const word: Record<State, string> = { ok: "in band", tight: "tight", loose: "loose" };
const tone: Record<State, string> = {
  ok: "border-ok text-ok",
  tight: "border-tight text-tight",
  loose: "border-loose text-loose",
};

export function ValvePreview() {
  const row = (side: "in" | "ex") => (
    <div className="grid grid-cols-4 gap-2">
      {cells
        .filter((c) => c.side === side)
        .map((c) => (
          <div key={`${side}${c.cyl}`} className="grid grid-cols-2 gap-1">
            {c.states.map((s, i) => (
              <div
                key={i}
                className={`flex flex-col items-center rounded-md border-2 bg-surface px-0.5 py-1 ${tone[s]}`}
              >
                <span aria-hidden className="text-base leading-none">
                  {glyph[s]}
                </span>
                <span className="mt-0.5 text-[0.6rem] leading-tight font-semibold uppercase">{word[s]}</span>
              </div>
            ))}
          </div>
        ))}
    </div>
  );
  return (
    <figure
      aria-label="Example engine diagram: an inline four with two valves tight and one loose"
      className="rounded-2xl border border-line bg-surface-2 p-3"
    >
      <p className="mb-2 text-xs font-semibold tracking-wide text-ink-soft uppercase">Intake side</p>
      {row("in")}
      <div className="figures my-2 grid grid-cols-4 gap-2 text-center text-sm font-bold text-ink-soft">
        {[1, 2, 3, 4].map((n) => (
          <span key={n}>Cyl {n}</span>
        ))}
      </div>
      {row("ex")}
      <p className="mt-2 text-xs font-semibold tracking-wide text-ink-soft uppercase">Exhaust side</p>
    </figure>
  );
}
