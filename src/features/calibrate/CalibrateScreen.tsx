import { Card, Screen, Text } from '../../ui';

export function CalibrateScreen() {
  return (
    <Screen title="Calibrate" subtitle="Drip rates of each burette, titrant lots and their standardisations, electrodes." testID="screen-calibrate">
      <Card>
        <Text tone="muted">No calibrations recorded yet.</Text>
      </Card>
    </Screen>
  );
}
