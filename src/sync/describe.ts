// The indicator's words and tone for a sync status (pure, so it is tested without a renderer).
import type { BadgeTone } from '../ui/Badge';
import type { SyncStatus } from './engine';

export function describeSync(s: SyncStatus | null, signedIn: boolean): { label: string; tone: BadgeTone } {
  if (!signedIn) return { label: 'Not signed in: kept on this device', tone: 'neutral' };
  if (!s) return { label: 'Sync starting', tone: 'neutral' };
  const d = describeState(s);
  // A clock far off does not stop anything (nothing is ordered by it), but the analyst should set it right.
  if (s.clockFlagged) return { label: `${d.label} · clock off`, tone: d.tone === 'ok' ? 'warn' : d.tone };
  return d;
}

function describeState(s: SyncStatus): { label: string; tone: BadgeTone } {
  const rejected = s.rejected ? ` · ${s.rejected} rejected` : '';
  switch (s.state) {
    case 'offline':
      return { label: `Offline${s.waiting ? ` · ${s.waiting} waiting` : ''}${rejected}`, tone: s.rejected ? 'danger' : 'warn' };
    case 'syncing':
      return { label: `Syncing${s.waiting ? ` ${s.waiting}` : ''}…${rejected}`, tone: s.rejected ? 'danger' : 'accent' };
    case 'signed-out':
      return { label: `Sign in to send ${s.waiting} waiting${rejected}`, tone: 'warn' };
    case 'error':
      return { label: `${s.waiting} waiting · retrying${rejected}`, tone: 'warn' };
    case 'waiting':
      return { label: `${s.waiting} waiting${rejected}`, tone: s.rejected ? 'danger' : 'warn' };
    case 'synced':
      return { label: s.rejected ? `All sent · ${s.rejected} rejected` : 'All synced', tone: s.rejected ? 'danger' : 'ok' };
  }
}

/** A device clock's offset from the server's (device minus server) as "about 3 days ahead", "about 20 min behind". */
export function clockOffsetText(offsetMs: number): string {
  const m = Math.abs(offsetMs) / 60_000;
  const size = m >= 36 * 60 ? `${Math.round(m / 1440)} days` : m >= 90 ? `${Math.round(m / 60)} h` : `${Math.max(1, Math.round(m))} min`;
  return `about ${size} ${offsetMs > 0 ? 'ahead of' : 'behind'} the server's`;
}
