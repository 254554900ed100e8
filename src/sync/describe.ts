// The indicator's words and tone for a sync status (pure, so it is tested without a renderer).
import type { BadgeTone } from '../ui/Badge';
import type { SyncStatus } from './engine';

export function describeSync(s: SyncStatus | null, signedIn: boolean): { label: string; tone: BadgeTone } {
  if (!signedIn) return { label: 'Not signed in: kept on this device', tone: 'neutral' };
  if (!s) return { label: 'Sync starting', tone: 'neutral' };
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
