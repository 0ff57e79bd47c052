/**
 * A member's roles in a club, the one list: every member is a mechanic, mentors review shared checks,
 * admins run the club. The database's enum, the API's schema and the club screen's choices derive from
 * it. No zod here, so a screen can name the roles without loading the schemas.
 */
export const ROLES = ["mechanic", "mentor", "admin"] as const;
export type Role = (typeof ROLES)[number];
