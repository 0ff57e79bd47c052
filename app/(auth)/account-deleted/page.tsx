import type { Metadata } from "next";
import Link from "next/link";
import { AuthShell } from "@/components/ui/controls";

export const metadata: Metadata = { title: "Account deleted" };

/** Where the account page sends the phone after a deletion: a full load, so nothing of the account stays in memory. */
export default function Page() {
  return (
    <AuthShell title="Your account is deleted">
      <p>
        Its records are gone from the server and from this phone, and no more mail goes to its address. The photos leave
        the photo store within minutes.
      </p>
      <p className="text-ink-soft">
        Other phones that were signed in clear their copy the next time they reach the server.
      </p>
      <Link href="/" className="inline-flex min-h-12 items-center font-bold underline underline-offset-4">
        Back to the start page
      </Link>
    </AuthShell>
  );
}
