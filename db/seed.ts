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
  cylinders: number;
  intakePer: number;
  exhaustPer: number;
  firingOrder: number[];
  firingAngles: number[] | null;
  intake: [number, number];
  exhaust: [number, number];
  series: [number, number, number];
  startShim: number;
  checks: { odometer: number; date: string }[];
  /** wear per 1,000 km of the gap (mm), intake and exhaust; one valve wears faster */
  wear: [number, number];
  fastValve?: string;
  /** where the shims sit: one engine of each kind, so both ways of fitting can be tried */
  shimPosition: "over" | "under";
}

/** the bucket shims of the demo engines (invented for the demo) */
const DEMO_SHIM_DIAMETER = 9.48;

const ENGINES: EngineSeed[] = [
  {
    name: "Blue four (inline four, 16 valves)",
    owner: 0,
    cylinders: 4,
    intakePer: 2,
    exhaustPer: 2,
    firingOrder: [1, 3, 4, 2],
    firingAngles: null,
    intake: [0.1, 0.2],
    exhaust: [0.2, 0.3],
    series: [2.5, 3.3, 0.05],
    startShim: 2.6,
    checks: [
      { odometer: 6_000, date: "2023-04-15" },
      { odometer: 18_500, date: "2024-05-04" },
      { odometer: 31_200, date: "2025-06-21" },
      { odometer: 43_800, date: "2026-10-10" },
    ],
    wear: [0.0012, 0.0022],
    fastValve: "E3.1",
    shimPosition: "under",
  },
  {
    name: "Green single (two valves)",
    owner: 0,
    cylinders: 1,
    intakePer: 1,
    exhaustPer: 1,
    firingOrder: [1],
    firingAngles: null,
    intake: [0.08, 0.13],
    exhaust: [0.16, 0.21],
    series: [1.2, 3.0, 0.025],
    startShim: 2.2,
    checks: [
      { odometer: 3_200, date: "2024-03-02" },
      { odometer: 11_900, date: "2025-04-12" },
      { odometer: 19_400, date: "2026-05-30" },
    ],
    wear: [0.001, 0.002],
    shimPosition: "over",
  },
  {
    name: "Red twin (90 degree V-twin, 8 valves)",
    owner: 1,
    cylinders: 2,
    intakePer: 2,
    exhaustPer: 2,
    firingOrder: [1, 2],
    firingAngles: [0, 270],
    intake: [0.1, 0.15],
    exhaust: [0.15, 0.2],
    series: [2.5, 3.3, 0.05],
    startShim: 2.7,
    checks: [
      { odometer: 9_000, date: "2024-08-17" },
      { odometer: 24_000, date: "2026-07-05" },
    ],
    wear: [0.0008, 0.0015],
    shimPosition: "under",
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
      const engineId = crypto.randomUUID();
      const ownerId = userIds[e.owner]!;
      await tx.insert(engines).values({
        id: engineId,
        ownerId,
        name: e.name,
        cylinders: e.cylinders,
        intakePerCylinder: e.intakePer,
        exhaustPerCylinder: e.exhaustPer,
        firingOrder: e.firingOrder,
        firingAngles: e.firingAngles,
        intakeMin: e.intake[0],
        intakeMax: e.intake[1],
        exhaustMin: e.exhaust[0],
        exhaustMax: e.exhaust[1],
        shimMin: e.series[0],
        shimMax: e.series[1],
        shimStep: e.series[2],
        assembledShim: e.startShim,
        shimDiameter: e.series[0] === 2.5 ? DEMO_SHIM_DIAMETER : null,
        shimPosition: e.shimPosition,
        version,
      });
      const sizes = shimSeries(...e.series);
      const valves = valveNames({
        cylinders: e.cylinders,
        intakePerCylinder: e.intakePer,
        exhaustPerCylinder: e.exhaustPer,
      });
      // Each valve's gap (shim + clearance) at assembly, a little above the middle of its band.
      const state = new Map(
        valves.map((v) => {
          const [lo, hi] = v.kind === "intake" ? e.intake : e.exhaust;
          const clearance = Math.round((hi - (hi - lo) * (0.15 + random() * 0.3)) * 100) / 100;
          return [v.id, { shim: e.startShim, gapAt0: e.startShim + clearance }];
        }),
      );
      for (const [ci, c] of e.checks.entries()) {
        const checkId = crypto.randomUUID();
        const last = ci === e.checks.length - 1;
        await tx.insert(checks).values({
          id: checkId,
          engineId,
          ownerId,
          odometer: c.odometer,
          status: last && e.owner === 0 && e.cylinders === 4 ? "planned" : "closed",
          startedAt: new Date(`${c.date}T09:30:00Z`),
          closedAt: last && e.cylinders === 4 ? null : new Date(`${c.date}T16:00:00Z`),
          version,
        });
        if (e.cylinders === 4 && e.owner === 0) latestBlueCheck = checkId;
        const planValves = valves.map((v) => {
          const s = state.get(v.id)!;
          const rate = v.id === e.fastValve ? 0.006 : v.kind === "intake" ? e.wear[0] : e.wear[1];
          const gap = s.gapAt0 - (rate * c.odometer) / 1000 + (random() - 0.5) * 0.01;
          const blades = bladesFor(gap - s.shim, METRIC_BLADES_MM) ?? { go: 0.02, noGo: 0.03 };
          const clearance = clearanceFromFeelers(blades);
          const spec =
            v.kind === "intake" ? { min: e.intake[0], max: e.intake[1] } : { min: e.exhaust[0], max: e.exhaust[1] };
          return { v, s, blades, clearance, spec };
        });
        const plan = planShims({
          valves: planValves.map((p) => ({
            id: p.v.id,
            installed: p.s.shim,
            measured: p.clearance.value,
            spec: p.spec,
          })),
          sizes,
        });
        if (last && e.cylinders === 4 && e.owner === 0)
          latestBluePlan = {
            valves: planValves.map((p) => ({
              id: p.v.id,
              installed: p.s.shim,
              measured: p.clearance.value,
              spec: p.spec,
            })),
            sizes,
          };
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
              fittedAt: fitted ? new Date(`${c.date}T14:00:00Z`) : null,
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
