import { useLocalSearchParams } from 'expo-router';
import { RunScreen } from '../../../src/features/bench/RunScreen';

export default function Route() {
  const { id } = useLocalSearchParams<{ id: string }>();
  return <RunScreen runId={String(id)} />;
}
