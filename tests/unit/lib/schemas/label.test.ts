import { describe, expect, it } from "vitest";
import { clubInput, engineFields } from "@/lib/schemas/records";
import { settingsInput, signUpInput } from "@/lib/schemas/account";
import { offerInput } from "@/lib/pool/rules";

const message = (r: { success: boolean; error?: { issues: { message: string }[] } }) =>
  r.success ? null : r.error!.issues[0]!.message;
const BAD = [
  '=HYPERLINK("x")\nTest',
  "a\rb",
  "tab\there",
  "nul\u0000",
  "esc\u001b[31m",
  "del\u007f",
  "c1\u0085",
  "line\u2028sep",
  "rtl\u202Eevil",
  "iso\u2066x",
];

describe("names and short labels refuse control characters", () => {
  it("refuses each control character with a clear message, at every shared schema", () => {
    for (const s of BAD) {
      expect(message(clubInput.safeParse({ name: s }))).toBe("no line breaks, tabs or other control characters");
      expect(message(engineFields.pick({ name: true }).safeParse({ name: s }))).toBe(
        "no line breaks, tabs or other control characters",
      );
      expect(message(settingsInput.safeParse({ name: s }))).toBe("no line breaks, tabs or other control characters");
      expect(message(signUpInput.pick({ name: true }).safeParse({ name: s }))).toBe(
        "no line breaks, tabs or other control characters",
      );
      expect(message(offerInput.pick({ note: true }).safeParse({ note: s }))).toBe(
        "no line breaks, tabs or other control characters",
      );
    }
  });

  it("keeps ordinary names, trims the ends, and still refuses an empty one", () => {
    expect(clubInput.parse({ name: "  Čelik & Söhne — Tuesday nights 🏍️ " }).name).toBe(
      "Čelik & Söhne — Tuesday nights 🏍️",
    );
    expect(clubInput.parse({ name: "Mara's four\n" }).name).toBe("Mara's four");
    expect(message(clubInput.safeParse({ name: "  " }))).toBe("give it a name");
  });
});
