"use client";

import { useCallback } from "react";

/**
 * A ref that moves focus to its element when the element appears, if asked: a step opened by a
 * button, so keyboard and screen-reader users land on its heading instead of the page's body. The
 * element takes tabIndex={-1}. Not asked on a first load, where focus belongs to the page.
 */
export function useFocusOnShow<T extends HTMLElement>(when: boolean) {
  return useCallback(
    (el: T | null) => {
      if (el && when) el.focus();
    },
    [when],
  );
}
