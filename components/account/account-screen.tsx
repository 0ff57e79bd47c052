"use client";

import { NoticeSetting } from "./notice-setting";
import { DeleteAccount } from "./delete-account";

/** The account page's sections, one screen loaded behind the shell (components/ui/screens.tsx). */
export function AccountSections() {
  return (
    <>
      <NoticeSetting />
      <DeleteAccount />
    </>
  );
}
