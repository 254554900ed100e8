import { Card, Screen, Text } from '../../ui';
import { SafetyNote } from './SafetyNote';

export function BenchScreen() {
  return (
    <Screen title="Bench" subtitle="Plan a run, start the clock with the drip, tap each reading." testID="screen-bench">
      <Card title="Run clock">
        <Text tone="muted">Setting up a run and recording it arrive with the bench work.</Text>
      </Card>
      <SafetyNote />
    </Screen>
  );
}
