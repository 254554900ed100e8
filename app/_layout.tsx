import { Slot } from 'expo-router';
import { AppFrame } from '../src/features/shell/AppFrame';
import { AppProviders } from '../src/providers/AppProviders';

export default function RootLayout() {
  return (
    <AppProviders>
      <AppFrame>
        <Slot />
      </AppFrame>
    </AppProviders>
  );
}
