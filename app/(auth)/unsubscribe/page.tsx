import type { Metadata } from "next";
import { Suspense } from "react";
import { AuthShell } from "@/components/ui/controls";
import { Unsubscribe } from "@/components/account/unsubscribe";

export const metadata: Metadata = { title: "Stop e-mails" };

export default function Page() {
  return (
    <AuthShell>
      <Suspense>
        <Unsubscribe />
      </Suspense>
    </AuthShell>
  );
}
