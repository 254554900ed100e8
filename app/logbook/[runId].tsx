import { useLocalSearchParams } from 'expo-router';
import { RunReportScreen } from '../../src/features/logbook/RunReportScreen';

export default function Route() {
  const { runId } = useLocalSearchParams<{ runId: string }>();
  return <RunReportScreen runId={String(runId)} />;
}
