// The run report's live follow: while the run is in progress, each change the server announces refetches the report
// (readings with their volumes, the server's analysis), so the curve, the readings table and the estimates move on.
import { useQueryClient } from '@tanstack/react-query';
import { useEffect, useMemo, useRef, useState } from 'react';
import type { PullResponse } from '../../../shared/schemas/sync';
import { api } from '../../api/client';
import { keys } from '../../api/keys';
import { eventStreamSupported, openEventStream } from '../../api/liveStream';
import { coalesce, LiveFollower, type FollowState } from './liveFollow';
import { usePageVisible } from './pageVisible';

/** Statuses of a run still being recorded (shared/schemas/desk.ts RUN_STATUSES). */
const IN_PROGRESS = new Set(['ready', 'recording', 'running', 'paused']);
export const isInProgress = (status: string) => IN_PROGRESS.has(status);

export interface LiveFollow extends FollowState {
  /** True once this screen has followed the run (so "stopped" is worth showing when it ends). */
  followed: boolean;
}

export function useLiveFollow(runId: string, status: string): LiveFollow {
  const qc = useQueryClient();
  const active = isInProgress(status);
  const [state, setState] = useState<FollowState>({ mode: active ? 'connecting' : 'stopped', note: null });
  const [followed, setFollowed] = useState(active);
  const refetch = useMemo(() => coalesce(() => qc.refetchQueries({ queryKey: keys.run(runId), exact: true })), [qc, runId]);

  const ended = active ? null : `The run is ${status}: no more readings will arrive.`;

  // A hidden page holds no stream open (a background tab left on a run would otherwise keep a connection to the
  // server for hours); shown again, it catches up with one refetch and follows on.
  const visible = usePageVisible();
  const wasHidden = useRef(false);

  useEffect(() => {
    if (ended !== null) {
      setState({ mode: 'stopped', note: ended });
      return;
    }
    setFollowed(true);
    if (!visible) {
      wasHidden.current = true;
      setState({ mode: 'paused', note: 'Paused while this page is hidden; it catches up when shown.' });
      return;
    }
    if (wasHidden.current) {
      wasHidden.current = false;
      void refetch();
    }
    const follower = new LiveFollower({
      runId,
      streamSupported: eventStreamSupported,
      openStream: openEventStream,
      poll: (path) => api<PullResponse>(path),
      onChanges: () => void refetch(),
      onState: setState,
    });
    setState(follower.current);
    follower.start();
    return () => follower.stop();
    // A status change within progress (running ↔ paused) keeps the same connection: `ended` stays null.
  }, [runId, ended, refetch, visible]);

  return { ...state, followed };
}
