import { useLocalSearchParams } from 'expo-router';
import { ResetPasswordScreen } from '../../src/features/auth/ResetPasswordScreen';

export default function Route() {
  const { token } = useLocalSearchParams<{ token: string }>();
  return <ResetPasswordScreen token={String(token ?? '')} />;
}
