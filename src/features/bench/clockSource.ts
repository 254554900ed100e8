// The one monotonic timeline of the run clock (see clock.ts): performance.now() offset by the page's time origin.
export function monoNow(): number {
  return performance.timeOrigin + performance.now();
}
