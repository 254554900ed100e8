// QueryClient's own file: the package index would bring all of react-query to the first screen (metro.config.js).
import { QueryClient } from '@tanstack/query-core/build/modern/queryClient.js';

export function makeQueryClient(): QueryClient {
  return new QueryClient({
    defaultOptions: {
      queries: { staleTime: 30_000, retry: 1, refetchOnWindowFocus: false, networkMode: 'offlineFirst' },
      mutations: { networkMode: 'offlineFirst' },
    },
  });
}
