import { afterEach, describe, expect, it, vi } from "vitest";
import { NextRequest, NextResponse } from "next/server";
import { z } from "zod";
import { instant } from "@/lib/api/contract";

/**
 * route() (server/http.ts) under test checks every answer against its response schema, and in
 * production does not parse at all: the flag is read when the module loads.
 */
// the routes here read no session; the real module would want a database's configuration
vi.mock("@/server/auth", () => ({ currentSession: async () => ({ user: null, revoked: false }) }));

async function httpWith(flag: string | undefined) {
  vi.resetModules();
  if (flag === undefined) delete process.env.LASHWRIGHT_CHECK_CONTRACT;
  else process.env.LASHWRIGHT_CHECK_CONTRACT = flag;
  return import("@/server/http");
}
afterEach(() => {
  delete process.env.LASHWRIGHT_CHECK_CONTRACT;
});

const schema = z.object({ n: z.number().int(), at: instant });
const call = async (
  handler: (req: NextRequest, ctx: { params: Promise<Record<string, string>> }) => Promise<Response>,
) => {
  const res = await handler(new NextRequest("http://127.0.0.1/api/t"), { params: Promise.resolve({}) });
  return { status: res.status, body: res.status === 204 ? null : ((await res.json()) as Record<string, any>) }; // eslint-disable-line @typescript-eslint/no-explicit-any
};
const open = { auth: false, session: false } as const;

describe("route()'s contract check", () => {
  it("under test: an answer within the schema goes out as it is (a Date sent as its ISO string)", async () => {
    const { route } = await httpWith("1");
    const at = new Date("2026-01-02T03:04:05.678Z");
    expect(await call(route({ response: schema, ...open }, async () => ({ n: 3, at })))).toEqual({
      status: 200,
      body: { n: 3, at: "2026-01-02T03:04:05.678Z" },
    });
  });

  it("under test: an answer outside the schema is a 500 that says so, and the log names the field", async () => {
    const { route } = await httpWith("1");
    const { log } = await import("@/server/log");
    const logged = vi.spyOn(log, "error").mockImplementation(() => undefined);
    const r = await call(route({ response: schema, ...open }, async () => ({ n: 1.5, at: "yesterday" }) as never));
    expect(r.status).toBe(500);
    expect(r.body?.error.code).toBe("contract");
    expect(String(logged.mock.calls[0]?.[1])).toMatch(/answer outside its contract: GET \/api\/t: n: .*; at: /);
  });

  it("under test: a Response the handler made is checked too (2xx JSON), and a 204 must send nothing", async () => {
    const { route } = await httpWith("1");
    const { log } = await import("@/server/log");
    vi.spyOn(log, "error").mockImplementation(() => undefined);
    const own = route({ response: schema, ...open }, async () => NextResponse.json({ n: "three" }));
    expect((await call(own)).status).toBe(500);
    const refusal = route({ response: schema, ...open }, async () => NextResponse.json({ no: 1 }, { status: 409 }));
    expect((await call(refusal)).status).toBe(409);
    const none = route({ response: z.undefined(), status: 204, ...open }, async () => undefined);
    expect((await call(none)).status).toBe(204);
    const some = route({ response: z.undefined(), status: 204, ...open }, async () => ({ n: 1 }) as never);
    expect((await call(some)).status).toBe(500);
  });

  it("in production: nothing is parsed, the answer goes out as the handler made it", async () => {
    const { route } = await httpWith(undefined);
    const parse = vi.spyOn(schema, "safeParse");
    const r = await call(route({ response: schema, ...open }, async () => ({ n: 1.5 }) as never));
    expect(r).toEqual({ status: 200, body: { n: 1.5 } });
    expect(parse).not.toHaveBeenCalled();
  });
});
