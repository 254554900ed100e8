import { BenchScreen } from '../../src/features/bench/BenchScreen';

export default function Route() {
  return <BenchScreen />;
}
