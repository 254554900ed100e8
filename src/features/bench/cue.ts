// Phone builds: vibration through react-native's Vibration (no sound file shipped yet).
import { Vibration } from 'react-native';

export function cueSupported(): boolean {
  return true;
}
export function primeCue(): void {}
export function playCue(strong: boolean): void {
  Vibration.vibrate(strong ? [0, 60, 40, 60] : 60);
}
