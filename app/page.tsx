import Link from "next/link";
import { SignedInHome } from "@/components/home/signed-in-home";
import { ValvePreview } from "@/components/home/valve-preview";

const steps = [
  {
    n: "1",
    title: "Measure",
    text: "Follow the crank-rotation guide and tap the feeler blade that goes. Every tap is saved on the phone at once.",
  },
  {
    n: "2",
    title: "Plan shims",
    text: "See the shim each valve needs, which ones swap around the engine, what the tray covers and the short buy list.",
  },
  {
    n: "3",
    title: "Fit and re-check",
    text: "Tick each swap, measure the changed valves again, and loop until every valve sits in its band.",
  },
  {
    n: "4",
    title: "Keep the record",
    text: "Each valve's drift over the years, with a warning when one closes faster than its neighbours.",
  },
];

// The account pages' links are not prefetched: a visitor on mobile data loads the landing page's
// code alone, and the sign-in form's only when they tap (npm run bench, first-visit JavaScript).
export default function HomePage() {
  return (
    <main className="mx-auto flex max-w-xl flex-col gap-8 px-4 pt-6 pb-12">
      <SignedInHome />
      <header className="flex items-center justify-between">
        <span className="text-2xl font-extrabold tracking-tight">
          Lash<span className="text-accent">wright</span>
        </span>
        <Link
          href="/sign-in"
          prefetch={false}
          className="inline-flex min-h-12 items-center rounded-xl border-2 border-line px-4 font-bold"
        >
          Sign in
        </Link>
      </header>

      <section className="flex flex-col gap-4">
        <h1 className="text-4xl leading-tight font-extrabold">The valve-clearance workbook for shim-type engines.</h1>
        <p className="text-lg text-ink-soft">
          Measure every valve cold, work out the shims, find them among the engine, your tray and the club, fit them and
          measure again. It all works in a garage with no signal, and syncs when you are back in range.
        </p>
        <div className="flex flex-col gap-3 sm:flex-row">
          <Link
            href="/sign-up"
            prefetch={false}
            className="inline-flex min-h-14 items-center justify-center rounded-xl bg-accent px-6 text-lg font-extrabold text-accent-ink"
          >
            Create an account to start
          </Link>
          <a
            href="#how"
            className="inline-flex min-h-14 items-center justify-center rounded-xl border-2 border-line px-6 text-lg font-bold"
          >
            How a check runs
          </a>
        </div>
        <p className="text-ink-soft">
          Already have an account?{" "}
          <Link
            href="/sign-in"
            prefetch={false}
            className="inline-flex min-h-12 items-center font-bold text-ink underline underline-offset-4"
          >
            Sign in
          </Link>
        </p>
      </section>

      <ValvePreview />

      <section id="how" aria-labelledby="how-title" className="flex flex-col gap-3">
        <h2 id="how-title" className="text-2xl font-extrabold">
          How a check runs
        </h2>
        <ol className="flex flex-col gap-3">
          {steps.map((s) => (
            <li key={s.n} className="flex gap-4 rounded-2xl border border-line bg-surface p-4">
              <span
                aria-hidden
                className="figures flex h-12 w-12 shrink-0 items-center justify-center rounded-full bg-surface-2 text-2xl font-extrabold text-accent"
              >
                {s.n}
              </span>
              <div>
                <h3 className="text-lg font-bold">{s.title}</h3>
                <p className="text-ink-soft">{s.text}</p>
              </div>
            </li>
          ))}
        </ol>
      </section>

      <section aria-labelledby="club-title" className="rounded-2xl border border-line bg-surface p-4">
        <h2 id="club-title" className="text-xl font-extrabold">
          A second pair of eyes
        </h2>
        <p className="text-ink-soft">
          Share a check with your club before you close the engine up. A mentor reads your numbers, comments on a valve
          or the whole check, and gives a verdict.
        </p>
      </section>

      <footer className="border-t border-line pt-4 text-sm text-ink-soft">
        <p>
          <strong className="text-ink">Work safely:</strong> engine cold, ignition off and battery disconnected, turn
          the crank by hand in its normal direction, and cover openings so no shim can drop in. Lashwright is a
          calculation aid, not a specification: the engine&apos;s service manual and a qualified mechanic have the last
          word.
        </p>
      </footer>
    </main>
  );
}
