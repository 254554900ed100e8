import { NewRunScreen } from '../../src/features/bench/NewRunScreen';

export default function Route() {
  return <NewRunScreen />;
}
