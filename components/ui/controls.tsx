import Link from "next/link";
import { cloneElement, type ChangeEvent, type ComponentProps, type ReactElement, type ReactNode } from "react";

/** Shared primitives: every target at least 48 px, labels always visible, errors in words. */
const base =
  "inline-flex min-h-12 items-center justify-center gap-2 rounded-xl px-5 text-lg font-bold disabled:opacity-50";
const looks = {
  primary: "bg-accent text-accent-ink font-extrabold",
  plain: "border-2 border-line text-ink",
  quiet: "text-ink underline underline-offset-4",
} as const;

export function Button({
  look = "primary",
  className = "",
  ...rest
}: ComponentProps<"button"> & { look?: keyof typeof looks }) {
  return <button className={`${base} ${looks[look]} ${className}`} {...rest} />;
}

export function ButtonLink({
  look = "primary",
  className = "",
  ...rest
}: ComponentProps<typeof Link> & { look?: keyof typeof looks }) {
  return <Link className={`${base} ${looks[look]} ${className}`} {...rest} />;
}

/**
 * A labelled field whose hint and error are tied to its control (aria-describedby), so a screen
 * reader reads them with the field, not only somewhere on the page. The hint stays beside an error:
 * it often says where the value comes from.
 */
export function Field({
  label,
  error,
  hint,
  children,
  id,
}: {
  label: string;
  error?: string;
  hint?: ReactNode;
  children: ReactElement<{ "aria-describedby"?: string; "aria-invalid"?: boolean }>;
  id: string;
}) {
  const described = [error && `${id}-error`, hint && `${id}-hint`].filter(Boolean).join(" ") || undefined;
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="font-bold">
        {label}
      </label>
      {cloneElement(children, { "aria-describedby": described, "aria-invalid": error ? true : undefined })}
      {error && (
        <p id={`${id}-error`} className="text-sm font-bold text-tight">
          <span aria-hidden>✕ </span>
          {error}
        </p>
      )}
      {hint && (
        <p id={`${id}-hint`} className="text-sm text-ink-soft">
          {hint}
        </p>
      )}
    </div>
  );
}

export const inputClass =
  "min-h-12 rounded-xl border-2 border-field bg-surface px-3 text-lg text-ink placeholder:text-ink-soft/70";

/** A controlled text input's value and its change handler. */
export const boundTo = (value: string, set: (v: string) => void) => ({
  value,
  onChange: (e: ChangeEvent<HTMLInputElement>) => set(e.target.value),
});

/** A text input in its Field: one id ties the label, the hint and the error to the control. */
export function InputField({
  id,
  label,
  error,
  hint,
  className,
  ...input
}: { id: string; label: string; error?: string; hint?: ReactNode } & Omit<ComponentProps<"input">, "id">) {
  return (
    <Field id={id} label={label} error={error} hint={hint}>
      <input id={id} className={className ? `${inputClass} ${className}` : inputClass} {...input} />
    </Field>
  );
}

export const authTitleClass = "text-3xl font-extrabold";

export function Notice({ tone = "info", children }: { tone?: "info" | "ok" | "error"; children: ReactNode }) {
  const cls = tone === "ok" ? "border-ok" : tone === "error" ? "border-tight" : "border-line";
  const glyph = tone === "ok" ? "✓" : tone === "error" ? "✕" : "ℹ";
  return (
    <div
      role={tone === "error" ? "alert" : "status"}
      className={`flex gap-2 rounded-xl border-2 ${cls} bg-surface p-3`}
    >
      <span aria-hidden className="font-bold">
        {glyph}
      </span>
      <div>{children}</div>
    </div>
  );
}

/** A select in its Field: one option a value, each shown in its words. */
export function SelectField<V extends string>({
  id,
  label,
  options,
  words,
  ...select
}: { id: string; label: string; options: readonly V[]; words: Record<V, string> } & Omit<
  ComponentProps<"select">,
  "id" | "children" | "className"
>) {
  return (
    <Field id={id} label={label}>
      <select id={id} className={inputClass} {...select}>
        {options.map((o) => (
          <option key={o} value={o}>
            {words[o]}
          </option>
        ))}
      </select>
    </Field>
  );
}

/**
 * A section named by its own heading (aria-labelledby), so a screen reader's list of regions reads
 * the heading's words.
 */
export function TitledSection({
  titleId,
  title,
  level = 2,
  titleClass,
  className,
  testId,
  children,
}: {
  titleId: string;
  title: ReactNode;
  level?: 2 | 3;
  titleClass: string;
  className: string;
  testId?: string;
  children: ReactNode;
}) {
  const Heading = level === 2 ? "h2" : "h3";
  return (
    <section aria-labelledby={titleId} className={className} data-testid={testId}>
      <Heading id={titleId} className={titleClass}>
        {title}
      </Heading>
      {children}
    </section>
  );
}

/** The frame of the account pages; without a title the page's content brings its own h1. */
export function AuthShell({ title, children }: { title?: string; children: ReactNode }) {
  return (
    <main className="mx-auto flex min-h-dvh max-w-md flex-col gap-6 px-4 pt-6 pb-12">
      <Link href="/" className="text-2xl font-extrabold tracking-tight">
        Lash<span className="text-accent">wright</span>
      </Link>
      {title && <h1 className="text-3xl font-extrabold">{title}</h1>}
      {children}
    </main>
  );
}
