import { config } from "zod/v4/core";

// No Function() probe in the browser: the pages' Content-Security-Policy forbids eval, and zod's
// probe for it would be reported as a violation. The server has no such policy, and there zod
// compiles its object checks (a push validates up to 200 mutations a request). Imported first by
// the schema modules; zod's full and small builds share this one setting.
config({ jitless: typeof window !== "undefined" });
