import { useLocalSearchParams } from 'expo-router';
import { CompareScreen } from '../../src/features/logbook/CompareScreen';

export default function Route() {
  const { ids } = useLocalSearchParams<{ ids?: string }>();
  return <CompareScreen ids={String(ids ?? '').split(',').filter(Boolean)} />;
}
