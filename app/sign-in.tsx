import { SignInScreen } from '../src/features/auth/SignInScreen';

export default function Route() {
  return <SignInScreen />;
}
