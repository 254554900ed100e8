// The provider's own file: the package index would bring all of react-query to the first screen (metro.config.js).
import { QueryClientProvider } from '@tanstack/react-query/build/modern/QueryClientProvider.js';
import { useState, type ReactNode } from 'react';
import { View } from 'react-native';
import { SafeAreaProvider } from 'react-native-safe-area-context';
import { colors } from '../theme/tokens';
import { useAppFonts } from './fonts';
import { makeQueryClient } from './queryClient';

export function AppProviders({ children }: { children: ReactNode }) {
  const [client] = useState(makeQueryClient);
  const fontsReady = useAppFonts();
  return (
    <SafeAreaProvider>
      <QueryClientProvider client={client}>
        {fontsReady ? children : <View style={{ flex: 1, backgroundColor: colors.paper }} testID="loading-fonts" />}
      </QueryClientProvider>
    </SafeAreaProvider>
  );
}
