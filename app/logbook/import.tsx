import { ImportScreen } from '../../src/features/logbook/ImportScreen';

export default function Route() {
  return <ImportScreen />;
}
