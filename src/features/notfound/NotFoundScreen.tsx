import { router } from 'expo-router';
import { Button, Card, Screen, Text } from '../../ui';

export function NotFoundScreen() {
  return (
    <Screen title="Nothing at this address" testID="screen-not-found">
      <Card>
        <Text>This page does not exist in Halfmark. Nothing was recorded or changed.</Text>
        <Button label="Go to the bench" onPress={() => router.replace('/bench')} />
      </Card>
    </Screen>
  );
}
