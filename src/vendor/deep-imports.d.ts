// Types for the single library files that start-up code imports instead of a package index (see metro.config.js,
// deepImports): each is the same code the index re-exports, so it has the index's types.
declare module '@tanstack/react-query/build/modern/QueryClientProvider.js' {
  export { QueryClientProvider, QueryClientContext, useQueryClient } from '@tanstack/react-query';
}
declare module '@tanstack/query-core/build/modern/queryClient.js' {
  export { QueryClient } from '@tanstack/react-query';
}
declare module 'expo-sqlite/build/SQLiteDatabase.js' {
  export { openDatabaseAsync, SQLiteDatabase } from 'expo-sqlite';
}
