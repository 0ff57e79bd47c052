/**
 * The sorts of mail the queue sends. Account mail (a link someone asked for, a confirmation) goes at
 * once, alone, and can never be turned off; an invitation goes at once and alone but its reader can
 * stop it; every other kind is a notice, gathered per address into one mail per window.
 */
export const ACCOUNT_KINDS: readonly string[] = [
  "verify",
  "reset",
  "signin",
  "account-exists",
  "password-removed",
  "delete-link",
];
export const SINGLE_KINDS: readonly string[] = [...ACCOUNT_KINDS, "invite"];

export const isAccountMail = (kind: string) => ACCOUNT_KINDS.includes(kind);
export const isGathered = (kind: string) => !SINGLE_KINDS.includes(kind);
