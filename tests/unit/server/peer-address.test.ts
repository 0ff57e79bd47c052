import http from "node:http";
import { describe, expect, it } from "vitest";
import { addressKey, installPeerAddress, socketAddress } from "@/server/peer-address";

describe("the network address a request is counted under", () => {
  it("is the socket's address, whatever X-Forwarded-For the caller sends", async () => {
    installPeerAddress();
    const seen: (string | null)[] = [];
    const server = http.createServer(async (_req, res) => {
      await new Promise((r) => setTimeout(r, 5)); // read after an await, as a route handler does
      seen.push(socketAddress());
      res.end();
    });
    await new Promise<void>((r) => server.listen(0, "127.0.0.1", r));
    const { port } = server.address() as { port: number };
    const ask = (localAddress: string) =>
      new Promise<void>((resolve, reject) => {
        const req = http.request(
          {
            host: "127.0.0.1",
            port,
            localAddress,
            headers: { "x-forwarded-for": "203.0.113.9", "x-real-ip": "203.0.113.9" },
          },
          (res) => (res.resume(), res.on("end", resolve)),
        );
        req.on("error", reject);
        req.end();
      });
    await Promise.all([ask("127.0.0.21"), ask("127.0.0.22")]);
    server.close();
    expect(seen.sort()).toEqual(["127.0.0.21", "127.0.0.22"]);
    expect(socketAddress()).toBeNull();
  });

  it("keys IPv4 as is, IPv4-mapped IPv6 as IPv4, IPv6 by its /64, and refuses anything else", () => {
    expect(addressKey("198.51.100.7")).toBe("198.51.100.7");
    expect(addressKey("::ffff:198.51.100.7")).toBe("198.51.100.7");
    expect(addressKey("2001:db8:aa:bb:1:2:3:4")).toBe("2001:db8:aa:bb::/64");
    expect(addressKey("2001:db8:aa:bb::9")).toBe("2001:db8:aa:bb::/64");
    expect(addressKey("2001:0db8:00aa:00bb:ffff::1")).toBe("2001:db8:aa:bb::/64");
    expect(addressKey("2001:db8::1")).toBe("2001:db8:0:0::/64");
    expect(addressKey("[2001:db8:1:2::5]")).toBe("2001:db8:1:2::/64");
    expect(addressKey("fe80::1%eth0")).toBe("fe80:0:0:0::/64");
    expect(addressKey("::1")).toBe("0:0:0:0::/64");
    expect(addressKey("::ffff:1.2.3.4.5")).toBeNull();
    for (const bad of [null, undefined, "", "unknown", "203.0.113.9, 10.0.0.1", "<script>", "1.2.3"])
      expect(addressKey(bad)).toBeNull();
  });
});
