import { Slot } from 'expo-router';
import { AppFrame } from '../src/features/shell/AppFrame';
import { AppProviders } from '../src/providers/AppProviders';
import { SyncIndicator } from '../src/sync/SyncIndicator';

export default function RootLayout() {
  return (
    <AppProviders>
      <AppFrame status={<SyncIndicator />}>
        <Slot />
      </AppFrame>
    </AppProviders>
  );
}
