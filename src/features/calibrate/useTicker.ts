import { useEffect, useState } from 'react';
import { monoNow } from '../bench/clockSource';

/** The monotonic clock, re-read every `ms` while `running` (drives the running timer display). */
export function useTicker(running: boolean, ms = 100): number {
  const [now, setNow] = useState(() => monoNow());
  useEffect(() => {
    if (!running) return;
    const id = setInterval(() => setNow(monoNow()), ms);
    return () => clearInterval(id);
  }, [running, ms]);
  return now;
}
