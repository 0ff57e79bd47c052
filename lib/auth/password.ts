import bcrypt from "bcryptjs";

/** bcrypt cost 12: OWASP's Password Storage Cheat Sheet asks for at least 10; 12 costs ~0.3 s here. */
export const BCRYPT_COST = 12;

export function hashPassword(plain: string): Promise<string> {
  return bcrypt.hash(plain, BCRYPT_COST);
}

export function verifyPassword(plain: string, hash: string): Promise<boolean> {
  return bcrypt.compare(plain, hash);
}
