import "server-only";
import { eq } from "drizzle-orm";
import { fileURLToPath } from "node:url";
import { bladesFor, clearanceFromFeelers, METRIC_BLADES_MM, planShims, shimSeries, valveNames } from "@/lib/lash";
import { hashPassword } from "@/server/password";
import { closeDb, db, transaction } from "./connection";
import {
  checks,
  clubs,
  comments,
  engines,
  memberships,
  poolOffers,
  readings,
  shares,
  trayItems,
  users,
  type Role,
} from "./schema";
import { nextVersion } from "./versions";
import { DEMO_PASSWORD, DEMO_USERS } from "../scripts/lib/demo-users.mjs";

/**
 * The demo scenario: an invented club, invented people and engines described only by their
 * configuration, with a few years of checks so the drift chart has something to say. Nothing here is
 * a real make, model, person or place. Seeding runs once: a second start finds the club and stops.
 */
export { DEMO_PASSWORD, DEMO_USERS };
const CLUB_NAME = "Kestrel Hollow Motor Club";

/** A small deterministic generator so every fresh start makes the same demo history. */
function rng(seed: number) {
  let s = seed >>> 0;
  return () => {
    s = (s * 1664525 + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

interface EngineSeed {
  name: string;
  owner: number;
  /** cylinders, valves per cylinder on each side (intake and exhaust), firing order and angles */
  layout: { cylinders: number; valvesPer: number; firingOrder: number[]; firingAngles: number[] | null };
  /** the clearance bands (mm), intake and exhaust */
  bands: { intake: [number, number]; exhaust: [number, number] };
  /**
   * the series (min, max, step), the shim fitted at assembly, and where the shims sit: one engine of
   * each kind, so both ways of fitting can be tried
   */
  shims: { series: [number, number, number]; start: number; position: "over" | "under" };
  /** the checks made, as [odometer, day] */
  checks: [number, string][];
  /** wear per 1,000 km of the gap (mm), intake and exhaust; one valve wears faster */
  wear: { rates: [number, number]; fastValve?: string };
}

/** the bucket shims of the demo engines (invented for the demo) */
const DEMO_SHIM_DIAMETER = 9.48;

const ENGINES: EngineSeed[] = [
  {
    name: "Blue four (inline four, 16 valves)",
    owner: 0,
    layout: { cylinders: 4, valvesPer: 2, firingOrder: [1, 3, 4, 2], firingAngles: null },
    bands: { intake: [0.1, 0.2], exhaust: [0.2, 0.3] },
    shims: { series: [2.5, 3.3, 0.05], start: 2.6, position: "under" },
    checks: [
      [6_000, "2023-04-15"],
      [18_500, "2024-05-04"],
      [31_200, "2025-06-21"],
      [43_800, "2026-10-10"],
    ],
    wear: { rates: [0.0012, 0.0022], fastValve: "E3.1" },
  },
  {
    name: "Green single (two valves)",
    owner: 0,
    layout: { cylinders: 1, valvesPer: 1, firingOrder: [1], firingAngles: null },
    bands: { intake: [0.08, 0.13], exhaust: [0.16, 0.21] },
    shims: { series: [1.2, 3.0, 0.025], start: 2.2, position: "over" },
    checks: [
      [3_200, "2024-03-02"],
      [11_900, "2025-04-12"],
      [19_400, "2026-05-30"],
    ],
    wear: { rates: [0.001, 0.002] },
  },
  {
    name: "Red twin (90 degree V-twin, 8 valves)",
    owner: 1,
    layout: { cylinders: 2, valvesPer: 2, firingOrder: [1, 2], firingAngles: [0, 270] },
    bands: { intake: [0.1, 0.15], exhaust: [0.15, 0.2] },
    shims: { series: [2.5, 3.3, 0.05], start: 2.7, position: "under" },
    checks: [
      [9_000, "2024-08-17"],
      [24_000, "2026-07-05"],
    ],
    wear: { rates: [0.0008, 0.0015] },
  },
];

export async function seedDemo(): Promise<{ seeded: boolean }> {
  const d = db();
  const existing = await d.select({ id: clubs.id }).from(clubs).where(eq(clubs.name, CLUB_NAME)).limit(1);
  if (existing.length > 0) return { seeded: false };

  const hash = await hashPassword(DEMO_PASSWORD);
  await transaction(async (tx) => {
    const userIds = DEMO_USERS.map(() => crypto.randomUUID());
    // new users: each one's first change version, the same number for all (db/versions.ts)
    let version = 0;
    for (const id of userIds) version = await nextVersion(tx, id);
    await tx.insert(users).values(
      DEMO_USERS.map((u, i) => ({
        id: userIds[i]!,
        email: u.email,
        name: u.name,
        passwordHash: hash,
        emailVerifiedAt: new Date("2023-01-10"),
      })),
    );
    const clubId = crypto.randomUUID();
    await tx.insert(clubs).values({ id: clubId, name: CLUB_NAME, createdBy: userIds[2]! });
    await tx.insert(memberships).values(
      DEMO_USERS.flatMap((u, i) =>
        [...new Set<string>(["mechanic", ...u.roles])].map((role) => ({
          clubId,
          userId: userIds[i]!,
          role: role as Role,
        })),
      ),
    );

    const random = rng(20231);
    let latestBlueCheck = "";
    let latestBluePlan: Parameters<typeof planShims>[0] | null = null;
    for (const e of ENGINES) {
      const { cylinders, valvesPer, firingOrder, firingAngles } = e.layout;
      const { intake, exhaust } = e.bands;
      const { series, start: startShim } = e.shims;
      const layout = { cylinders, intakePerCylinder: valvesPer, exhaustPerCylinder: valvesPer };
      const engineId = crypto.randomUUID();
      const ownerId = userIds[e.owner]!;
      await tx.insert(engines).values({
        id: engineId,
        ownerId,
        name: e.name,
        ...layout,
        firingOrder,
        firingAngles,
        intakeMin: intake[0],
        intakeMax: intake[1],
        exhaustMin: exhaust[0],
        exhaustMax: exhaust[1],
        shimMin: series[0],
        shimMax: series[1],
        shimStep: series[2],
        assembledShim: startShim,
        shimDiameter: series[0] === 2.5 ? DEMO_SHIM_DIAMETER : null,
        shimPosition: e.shims.position,
        version,
      });
      const sizes = shimSeries(...series);
      const valves = valveNames(layout);
      // Each valve's gap (shim + clearance) at assembly, a little above the middle of its band.
      const state = new Map(
        valves.map((v) => {
          const [lo, hi] = v.kind === "intake" ? intake : exhaust;
          const clearance = Math.round((hi - (hi - lo) * (0.15 + random() * 0.3)) * 100) / 100;
          return [v.id, { shim: startShim, gapAt0: startShim + clearance }];
        }),
      );
      for (const [ci, [odometer, day]] of e.checks.entries()) {
        const checkId = crypto.randomUUID();
        const last = ci === e.checks.length - 1;
        await tx.insert(checks).values({
          id: checkId,
          engineId,
          ownerId,
          odometer,
          status: last && e.owner === 0 && cylinders === 4 ? "planned" : "closed",
          startedAt: new Date(`${day}T09:30:00Z`),
          closedAt: last && cylinders === 4 ? null : new Date(`${day}T16:00:00Z`),
          version,
        });
        if (cylinders === 4 && e.owner === 0) latestBlueCheck = checkId;
        const planValves = valves.map((v) => {
          const s = state.get(v.id)!;
          const rate = v.id === e.wear.fastValve ? 0.006 : v.kind === "intake" ? e.wear.rates[0] : e.wear.rates[1];
          const gap = s.gapAt0 - (rate * odometer) / 1000 + (random() - 0.5) * 0.01;
          const blades = bladesFor(gap - s.shim, METRIC_BLADES_MM) ?? { go: 0.02, noGo: 0.03 };
          const clearance = clearanceFromFeelers(blades);
          const [min, max] = v.kind === "intake" ? intake : exhaust;
          const spec = { min, max };
          return { v, s, blades, clearance, spec };
        });
        const planInput = {
          valves: planValves.map((p) => ({
            id: p.v.id,
            installed: p.s.shim,
            measured: p.clearance.value,
            spec: p.spec,
          })),
          sizes,
        };
        const plan = planShims(planInput);
        if (last && cylinders === 4 && e.owner === 0) latestBluePlan = planInput;
        await tx.insert(readings).values(
          planValves.map((p, i) => {
            const a = plan.assignments[i]!;
            const fitted = !last && a.source.kind !== "keep";
            return {
              checkId,
              ownerId,
              valve: p.v.id,
              installedStamp: p.s.shim,
              feelerGo: p.blades.go,
              feelerNoGo: p.blades.noGo ?? null,
              measured: p.clearance.value,
              fittedShim: fitted ? a.size : null,
              fittedAt: fitted ? new Date(`${day}T14:00:00Z`) : null,
              version,
            };
          }),
        );
        if (!last) {
          // The shims were fitted: the gap stays, the shim changes (and the gap at 0 shifts with it).
          for (const a of plan.assignments) {
            const s = state.get(a.valveId)!;
            if (a.source.kind !== "keep") s.shim = a.size;
          }
        }
      }
    }

    const maraTray = [
      { size: 2.55, count: 1 },
      { size: 2.6, count: 2 },
      { size: 2.7, count: 1 },
      { size: 2.85, count: 1 },
    ];
    await tx
      .insert(trayItems)
      .values(maraTray.map((t) => ({ ownerId: userIds[0]!, ...t, shimDiameter: DEMO_SHIM_DIAMETER, version })));

    // Teodor lends spares through the club: one size of them is what Mara's open plan would buy.
    const buy = latestBluePlan ? planShims({ ...latestBluePlan, tray: maraTray }).buy[0] : undefined;
    const teodorTray = [{ size: 2.45, count: 3 }, ...(buy ? [{ size: buy.size, count: buy.count + 1 }] : [])];
    const teodorItems = teodorTray.map((t) => ({
      id: crypto.randomUUID(),
      ownerId: userIds[1]!,
      ...t,
      shimDiameter: DEMO_SHIM_DIAMETER,
      version,
    }));
    await tx.insert(trayItems).values(teodorItems);
    await tx.insert(poolOffers).values(
      teodorTray.map((t) => ({
        clubId,
        ownerId: userIds[1]!,
        size: t.size,
        count: t.count,
        shimDiameter: DEMO_SHIM_DIAMETER,
        note: "In the blue tin on the club bench",
        version,
      })),
    );

    // Mara asked the club to look over the latest check of the four; Teodor has commented.
    await tx.insert(shares).values({ checkId: latestBlueCheck, clubId, sharedBy: userIds[0]!, version });
    await tx.insert(comments).values([
      {
        checkId: latestBlueCheck,
        authorId: userIds[1]!,
        valve: null,
        body: "Readings look careful. Blade pairs are consistent across the head.",
        version,
      },
      {
        checkId: latestBlueCheck,
        authorId: userIds[1]!,
        valve: "E3.1",
        body: "This exhaust has closed faster than its neighbours for three checks. Another shim will do for now, but plan to look at the seat.",
        version,
      },
    ]);
  });
  return { seeded: true };
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  seedDemo()
    .then(async (r) => {
      console.log(r.seeded ? "Demo data added." : "Demo data already present: nothing added.");
      await closeDb();
    })
    .catch(async (e: unknown) => {
      console.error(`Seeding failed: ${e instanceof Error ? e.message : String(e)}`);
      await closeDb();
      process.exit(1);
    });
}
