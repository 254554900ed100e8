import { RegisterScreen } from '../../src/features/calibrate/RegisterScreen';

export default function Route() {
  return <RegisterScreen />;
}
