import { signedInClient, type Client } from "./api";
import { addMembership, ENGINE_FOUR, FIXTURE_PASSWORD, makeUser } from "./fixtures";

/** A common 9.48 mm shim system (from memory): the engine, the tray and the offers all say it, so offers fit. */
export const SHIM_DIAMETER = 9.48;
export const ODOMETER = 43_800;

// intake band 0.10-0.20, exhaust 0.20-0.30 on 2.60 shims (ENGINE_FOUR): four valves out of band,
// two intake tight and two exhaust loose, so the plan changes four shims
export const GO: Record<string, number> = {
  "I1.1": 0.15,
  "I1.2": 0.13,
  "E1.1": 0.25,
  "E1.2": 0.23,
  "I2.1": 0.15,
  "I2.2": 0.08,
  "E2.1": 0.33,
  "E2.2": 0.25,
  "I3.1": 0.18,
  "I3.2": 0.15,
  "E3.1": 0.38,
  "E3.2": 0.25,
  "I4.1": 0.05,
  "I4.2": 0.15,
  "E4.1": 0.28,
  "E4.2": 0.25,
};
// a common metric feeler set (from memory): the blade that does not go is the next one up
export const BLADES = [
  0.02, 0.03, 0.04, 0.05, 0.06, 0.07, 0.08, 0.09, 0.1, 0.13, 0.15, 0.18, 0.2, 0.23, 0.25, 0.28, 0.3, 0.33, 0.38, 0.4,
  0.45, 0.5,
];

/** Readings on 2.60 shims by feeler blades: the blade that went (`go`) and the next one up, which did not. */
export function bladeReadings(checkId: string, go: Record<string, number>) {
  return Object.entries(go).map(([valve, blade]) => ({
    name: "reading.put/1",
    args: {
      checkId,
      reading: {
        valve,
        installedStamp: 2.6,
        feelerGo: blade,
        feelerNoGo: BLADES[BLADES.indexOf(blade) + 1],
        measured: blade,
      },
    },
  }));
}

export interface Person {
  id: string;
  email: string;
  password: string;
  name: string;
  api: Client;
}

/**
 * A club of its own for one browser test, made through the API as the people would: a mentor who
 * set the club up, a mechanic in it, and the mechanic's engines, each with one measured check at
 * 43,800 km (four valves out of band, nothing fitted yet), shared with the club where asked. Every
 * name carries the test's tag, so no other test file's changes (a verdict, a loan, a withdrawn
 * share) can reach this test's data, whatever order the files run in.
 */
export async function clubScenario(base: string, tag: string, engines: { name: string; shared: boolean }[]) {
  const person = async (role: string): Promise<Person> => {
    const u = await makeUser(`${tag}-${role}`);
    return { ...u, password: FIXTURE_PASSWORD, name: `Test ${tag}-${role}`, api: await signedInClient(base, u) };
  };
  const [mentor, mechanic] = [await person("mentor"), await person("mechanic")];
  const club = (await mentor.api.post("/api/clubs", { name: `Club ${tag}` })).json.club as { id: string; name: string };
  await addMembership(club.id, mentor.id, ["mentor"]);
  await addMembership(club.id, mechanic.id, ["mechanic"]);

  const made: { name: string; engineId: string; checkId: string }[] = [];
  const clientId = crypto.randomUUID();
  let id = 0;
  for (const e of engines) {
    const engineId = crypto.randomUUID();
    const checkId = crypto.randomUUID();
    const mutations = [
      {
        id: ++id,
        name: "engine.put/1",
        args: { ...ENGINE_FOUR, id: engineId, name: e.name, shimDiameter: SHIM_DIAMETER, assembledShim: 2.6 },
      },
      { id: ++id, name: "check.put/1", args: { id: checkId, engineId, odometer: ODOMETER } },
      ...bladeReadings(checkId, GO).map((m) => ({ id: ++id, ...m })),
    ];
    const pushed = await mechanic.api.post("/api/sync/push", { clientId, mutations });
    if (pushed.status !== 200 || pushed.json.rejected.length)
      throw new Error(`scenario push refused: ${JSON.stringify(pushed.json)}`);
    if (e.shared) {
      const s = await mechanic.api.post(`/api/checks/${checkId}/shares`, { clubId: club.id });
      if (s.status !== 201) throw new Error(`scenario share refused: ${JSON.stringify(s.json)}`);
    }
    made.push({ name: e.name, engineId, checkId });
  }
  return { club, mentor, mechanic, engines: made };
}

/**
 * The mentor's spares, offered to the club: every size from 2.30 to 2.90 mm, four of each, so
 * whichever sizes the mechanic's plan needs are on offer and the plan borrows them instead of buying.
 */
export async function offerSpares(lender: Person, clubId: string) {
  for (let size = 2.3; size < 2.905; size = Math.round((size + 0.05) * 100) / 100) {
    const t = await lender.api.post("/api/tray", { size, count: 4, shimDiameter: SHIM_DIAMETER });
    if (t.status !== 201 && t.status !== 200) throw new Error(`tray refused: ${JSON.stringify(t.json)}`);
    const o = await lender.api.post(`/api/clubs/${clubId}/pool`, {
      size,
      count: 4,
      shimDiameter: SHIM_DIAMETER,
      note: "In the tin on the club bench",
    });
    if (o.status !== 201) throw new Error(`offer refused: ${JSON.stringify(o.json)}`);
  }
}
