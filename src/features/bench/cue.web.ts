// A short beep and a buzz at the planned reading cadence (optional, off by default).
let ctx: AudioContext | null = null;

export function cueSupported(): boolean {
  return typeof window !== 'undefined' && ('AudioContext' in window || 'vibrate' in navigator);
}

/** Call from a tap first (browsers only allow sound after a user gesture). */
export function primeCue(): void {
  if (typeof window === 'undefined' || !('AudioContext' in window)) return;
  ctx ??= new AudioContext();
  void ctx.resume().catch(() => undefined);
}

export function playCue(strong: boolean): void {
  try {
    if (ctx && ctx.state === 'running') {
      const osc = ctx.createOscillator();
      const gain = ctx.createGain();
      osc.frequency.value = strong ? 1320 : 880;
      gain.gain.setValueAtTime(0.25, ctx.currentTime);
      gain.gain.exponentialRampToValueAtTime(0.001, ctx.currentTime + 0.15);
      osc.connect(gain).connect(ctx.destination);
      osc.start();
      osc.stop(ctx.currentTime + 0.16);
    }
    navigator.vibrate?.(strong ? [60, 40, 60] : 60);
  } catch {
    /* a cue is a convenience: never disturb the run */
  }
}
