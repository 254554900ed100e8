import { Slot } from 'expo-router';
import { AppFrame } from '../src/features/shell/AppFrame';
import { AppProviders } from '../src/providers/AppProviders';
import { SessionBanner, StatusArea } from '../src/features/shell/StatusArea';

export default function RootLayout() {
  return (
    <AppProviders>
      <AppFrame status={<StatusArea />} banner={<SessionBanner />}>
        <Slot />
      </AppFrame>
    </AppProviders>
  );
}
