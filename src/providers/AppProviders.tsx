import { QueryClientProvider } from '@tanstack/react-query';
import { useFonts } from 'expo-font';
import { useState, type ReactNode } from 'react';
import { View } from 'react-native';
import { SafeAreaProvider } from 'react-native-safe-area-context';
import { colors, fonts } from '../theme/tokens';
import { makeQueryClient } from './queryClient';

/** Fonts ship in assets/fonts, so the page draws its own type offline. */
const FONT_FILES = {
  [fonts.regular]: require('../../assets/fonts/Inter_400Regular.ttf'),
  [fonts.semibold]: require('../../assets/fonts/Inter_600SemiBold.ttf'),
  [fonts.bold]: require('../../assets/fonts/Inter_700Bold.ttf'),
};

export function AppProviders({ children }: { children: ReactNode }) {
  const [client] = useState(makeQueryClient);
  const [loaded, error] = useFonts(FONT_FILES);
  return (
    <SafeAreaProvider>
      <QueryClientProvider client={client}>
        {loaded || error ? children : <View style={{ flex: 1, backgroundColor: colors.paper }} testID="loading-fonts" />}
      </QueryClientProvider>
    </SafeAreaProvider>
  );
}
