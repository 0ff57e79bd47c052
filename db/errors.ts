import "server-only";

/** The MariaDB error code (ER_DUP_ENTRY, ...) behind an error, looking through drizzle's wrapper. */
export function mysqlErrorCode(e: unknown): string | undefined {
  for (let cur: unknown = e, depth = 0; cur && depth < 5; depth++) {
    const code = (cur as { code?: unknown }).code;
    if (typeof code === "string" && code.startsWith("ER_")) return code;
    cur = (cur as { cause?: unknown }).cause;
  }
  return undefined;
}

/** A change the rules refuse (an unknown record, an impossible step); its message is for the user. */
export class Refused extends Error {
  /** 404 when the record is not the caller's to see, 409 when the step cannot be taken now */
  constructor(
    message: string,
    readonly status: 404 | 409 = 409,
  ) {
    super(message);
  }
}
