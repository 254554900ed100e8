import { useLocalSearchParams } from 'expo-router';
import { AcceptInvitationScreen } from '../../src/features/auth/AcceptInvitationScreen';

export default function Route() {
  const { token } = useLocalSearchParams<{ token: string }>();
  return <AcceptInvitationScreen token={String(token ?? '')} />;
}
