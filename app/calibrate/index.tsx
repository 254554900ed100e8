import { CalibrateScreen } from '../../src/features/calibrate/CalibrateScreen';

export default function Route() {
  return <CalibrateScreen />;
}
