import { z } from "zod";

// No Function() probe: the pages' Content-Security-Policy forbids eval, and zod's probe for it
// would be reported as a violation. Imported first by the schema modules.
z.config({ jitless: true });
