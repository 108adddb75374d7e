/** One TanStack Query client per page, and a provider that islands wrap themselves in. */
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import type { ReactNode } from 'react';

let client: QueryClient | null = null;

/** The page's query client (created on first use). */
export function getQueryClient(): QueryClient {
  client ??= new QueryClient({ defaultOptions: { queries: { staleTime: 10_000, retry: 1, refetchOnWindowFocus: false }, mutations: { retry: 0 } } });
  return client;
}

/** Wraps an island's tree in the shared query client. */
export function QueryRoot({ children }: { children: ReactNode }) {
  return <QueryClientProvider client={getQueryClient()}>{children}</QueryClientProvider>;
}
