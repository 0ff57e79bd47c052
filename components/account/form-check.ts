import type { FieldErrors, FieldValues, Resolver } from "react-hook-form";
import type { FormCheck } from "@/lib/schemas/forms";

/** A form's check (lib/schemas/forms.ts) as react-hook-form's resolver: the message beside each field. */
export function checkedBy<T extends FieldValues>(
  check: (values: Record<string, unknown>) => FormCheck<T>,
): Resolver<T> {
  return async (values) => {
    const r = check(values);
    if (r.ok) return { values: r.data, errors: {} };
    const errors = Object.fromEntries(
      Object.entries(r.errors).map(([k, message]) => [k, { type: "validate", message }]),
    );
    return { values: {}, errors: errors as FieldErrors<T> };
  };
}
