import Link from "next/link";
import type { ComponentProps, ReactNode } from "react";
import { InputField } from "@/components/ui/controls";

/** The e-mail field of the sign-in and sign-up forms: the phone's e-mail keyboard and autofill. */
export function EmailField(props: { error?: string } & Omit<ComponentProps<"input">, "id">) {
  return <InputField id="email" label="E-mail" type="email" autoComplete="email" inputMode="email" {...props} />;
}

/** The link under a form to the form for the other case (an account or none, a forgotten password). */
export function SwitchLink({ href, children }: { href: string; children: ReactNode }) {
  return (
    <Link
      href={href}
      prefetch={false}
      className="inline-flex min-h-12 items-center font-bold underline underline-offset-4"
    >
      {children}
    </Link>
  );
}
