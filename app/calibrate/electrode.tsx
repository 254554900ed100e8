import { ElectrodeScreen } from '../../src/features/calibrate/ElectrodeScreen';

export default function Route() {
  return <ElectrodeScreen />;
}
