import { makeUser } from "./fixtures";

type User = Awaited<ReturnType<typeof makeUser>>;

/** Users made at once by makeUser, one a tag, in the order of the tags. */
export function makeUsers<const T extends readonly string[]>(...tags: T): Promise<{ -readonly [K in keyof T]: User }> {
  return Promise.all(tags.map((tag) => makeUser(tag))) as Promise<{ -readonly [K in keyof T]: User }>;
}
