import { StandardisationScreen } from '../../src/features/calibrate/StandardisationScreen';

export default function Route() {
  return <StandardisationScreen />;
}
