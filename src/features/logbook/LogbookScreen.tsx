import { Card, Screen, Text } from '../../ui';

export function LogbookScreen() {
  return (
    <Screen title="Logbook" subtitle="Every run of the lab: results, reports, comparisons, review." testID="screen-logbook">
      <Card>
        <Text tone="muted">No runs to show yet.</Text>
      </Card>
    </Screen>
  );
}
