import { GravimetricScreen } from '../../src/features/calibrate/GravimetricScreen';

export default function Route() {
  return <GravimetricScreen />;
}
