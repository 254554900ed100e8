// Asks before signing out while work is still waiting to reach the server (native: an alert).
import { Alert } from 'react-native';

export function confirmLeave(waiting: number): Promise<boolean> {
  return new Promise((resolve) =>
    Alert.alert(
      'Not everything is on the server yet',
      `${waiting} change${waiting === 1 ? ' is' : 's are'} still waiting. They stay on this device and go out after the next sign-in. Sign out anyway?`,
      [
        { text: 'Stay signed in', style: 'cancel', onPress: () => resolve(false) },
        { text: 'Sign out', style: 'destructive', onPress: () => resolve(true) },
      ],
    ),
  );
}
