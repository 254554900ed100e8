import { DropCountScreen } from '../../src/features/calibrate/TapSeriesScreens';

export default function Route() {
  return <DropCountScreen />;
}
