import { LogbookScreen } from '../../src/features/logbook/LogbookScreen';

export default function Route() {
  return <LogbookScreen />;
}
