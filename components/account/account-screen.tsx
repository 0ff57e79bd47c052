"use client";

import { NoticeSetting } from "./notice-setting";
import { DataExport } from "./data-export";
import { DeleteAccount } from "./delete-account";

/** The account page's sections, one screen loaded behind the shell (components/ui/screens.tsx). */
export function AccountSections() {
  return (
    <>
      <NoticeSetting />
      <DataExport />
      <DeleteAccount />
    </>
  );
}
