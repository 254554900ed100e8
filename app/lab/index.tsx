import { LabScreen } from '../../src/features/lab/LabScreen';

export default function Route() {
  return <LabScreen />;
}
