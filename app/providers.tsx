"use client";

import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { SerwistProvider } from "@serwist/turbopack/react";
import { useState, type ReactNode } from "react";
import { LocalProvider } from "@/components/sync/local-provider";

export function Providers({ children }: { children: ReactNode }) {
  const [client] = useState(() => new QueryClient({ defaultOptions: { queries: { staleTime: 30_000, retry: 1 } } }));
  // reloadOnOnline off: an 'online' event is only a hint, and a reload would lose the screen's state
  return (
    <SerwistProvider swUrl="/serwist/sw.js" reloadOnOnline={false} cacheOnNavigation={false}>
      <QueryClientProvider client={client}>
        <LocalProvider>{children}</LocalProvider>
      </QueryClientProvider>
    </SerwistProvider>
  );
}
