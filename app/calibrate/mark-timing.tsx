import { MarkTimingScreen } from '../../src/features/calibrate/TapSeriesScreens';

export default function Route() {
  return <MarkTimingScreen />;
}
