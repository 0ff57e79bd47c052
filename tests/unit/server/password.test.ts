import bcrypt from "bcryptjs";
import { describe, expect, it } from "vitest";
import { hash } from "@node-rs/argon2";
import {
  ARGON2,
  HASH_QUEUE_LIMIT,
  HASHING_AT_ONCE,
  hashPassword,
  hashRefusals,
  needsRehash,
  verifyPassword,
  type HashWatch,
} from "@/server/password";
import { DomainError } from "@/lib/errors";

describe("password hashing (OWASP Password Storage Cheat Sheet; OWASP ASVS 5.0 V11 Cryptography)", () => {
  it("stores Argon2id at m=19456 KiB, t=2, p=1 with a fresh salt, and verifies only the right password", async () => {
    const [a, b] = await Promise.all([hashPassword("a-fine-password"), hashPassword("a-fine-password")]);
    expect(a).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$/);
    expect(a).not.toBe(b);
    expect(await verifyPassword("a-fine-password", a)).toBe(true);
    expect(await verifyPassword("a-fine-passwore", a)).toBe(false);
    expect(needsRehash(a)).toBe(false);
  });

  it("keeps verifying bcrypt hashes made before, and marks them (and weaker argon2) for replacement", async () => {
    const old = await bcrypt.hash("an-old-password", 4);
    expect(await verifyPassword("an-old-password", old)).toBe(true);
    expect(await verifyPassword("not-the-password", old)).toBe(false);
    expect(needsRehash(old)).toBe(true);
    expect(needsRehash(await hash("x", { ...ARGON2, memoryCost: 4096 }))).toBe(true);
    // anything else is no hash at all: never a match
    for (const junk of ["", "plain-text", "$argon2id$garbage", "$2b$xx$"])
      expect(await verifyPassword("plain-text", junk)).toBe(false);
  });

  it("runs a bounded number at once and queues a bounded number; the rest are refused at once with Retry-After", async () => {
    const watch: HashWatch = { retryAfterSeconds: null, undo: [] };
    const asked = 2 * (HASHING_AT_ONCE + HASH_QUEUE_LIMIT);
    const results = await hashRefusals.run(watch, () =>
      Promise.allSettled(Array.from({ length: asked }, (_, i) => hashPassword(`burst-${i}-password`))),
    );
    const done = results.filter((r) => r.status === "fulfilled").length;
    const refused = results.flatMap((r) => (r.status === "rejected" ? [r.reason] : []));
    expect(done).toBe(HASHING_AT_ONCE + HASH_QUEUE_LIMIT);
    expect(refused).toHaveLength(asked - done);
    for (const e of refused) {
      expect(e).toBeInstanceOf(DomainError);
      expect((e as DomainError).kind).toBe("overloaded");
      expect((e as DomainError).extra.retryAfterSeconds).toBeGreaterThan(0);
    }
    expect(watch.retryAfterSeconds).toBeGreaterThan(0);
    // the queue drained: the next hash runs
    expect(await verifyPassword("after", await hashPassword("after"))).toBe(true);
  }, 60_000);
});
