import type { Metadata } from "next";
import { AppShell } from "@/components/ui/app-shell";
import { NoticeSetting } from "@/components/account/notice-setting";
import { DataExport } from "@/components/account/data-export";

export const metadata: Metadata = { title: "Account" };

export default function Page() {
  return (
    <AppShell title="Account">
      <NoticeSetting />
      <DataExport />
    </AppShell>
  );
}
