import { Card, Screen, Text } from '../../ui';

export function LabScreen() {
  return (
    <Screen title="Lab" subtitle="Members and their roles, invitations, the audit trail." testID="screen-lab">
      <Card>
        <Text tone="muted">Sign in to see your lab.</Text>
      </Card>
    </Screen>
  );
}
