/**
 * Password rules after NIST SP 800-63B (5.1.1.2): at least 8 characters, at least 64 allowed, no
 * composition rules, and refuse passwords known to be common. The list below is a short selection
 * of the most common passwords in published breach lists (from memory), checked case-insensitively.
 */
const COMMON = new Set(
  [
    "password",
    "password1",
    "password12",
    "password123",
    "passw0rd",
    "12345678",
    "123456789",
    "1234567890",
    "12341234",
    "11111111",
    "00000000",
    "87654321",
    "88888888",
    "qwertyui",
    "qwerty123",
    "qwertyuiop",
    "1q2w3e4r",
    "1qaz2wsx",
    "abc12345",
    "abcd1234",
    "iloveyou",
    "sunshine",
    "princess",
    "football",
    "baseball",
    "welcome1",
    "welcome123",
    "trustno1",
    "superman",
    "starwars",
    "whatever",
    "letmein1",
    "dragon12",
    "monkey12",
    "master12",
    "shadow12",
    "michael1",
    "jennifer",
    "computer",
    "internet",
    "zaq12wsx",
    "asdfghjk",
    "asdf1234",
    "changeme",
    "secret123",
    "admin123",
    "administrator",
    "lashwright",
    "motorcycle",
    "mechanic",
  ].map((p) => p.toLowerCase()),
);

export const PASSWORD_MIN = 8;
export const PASSWORD_MAX = 128;

/** true for a password on the common list (case-insensitive) */
export function isCommonPassword(p: string): boolean {
  return COMMON.has(p.toLowerCase());
}
