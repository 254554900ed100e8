import { closeSync, mkdirSync, openSync, readFileSync, rmSync, writeSync } from 'node:fs';
import path from 'node:path';

export class DataDirLockedError extends Error {}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/**
 * Two processes on one PGlite directory corrupt it. The lock file holds the owner's pid; a lock left by a process
 * that no longer runs (crash, kill -9) is taken over.
 */
export function lockDataDir(dataDir: string): () => void {
  mkdirSync(dataDir, { recursive: true });
  const file = path.join(dataDir, 'halfmark.lock');
  for (let attempt = 0; attempt < 2; attempt++) {
    try {
      const fd = openSync(file, 'wx');
      writeSync(fd, String(process.pid));
      closeSync(fd);
      let released = false;
      return () => {
        if (released) return;
        released = true;
        rmSync(file, { force: true });
      };
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== 'EEXIST') throw err;
      const pid = Number(readFileSync(file, 'utf8').trim());
      if (Number.isInteger(pid) && pid > 0 && pid !== process.pid && alive(pid)) {
        throw new DataDirLockedError(
          `The data directory ${dataDir} is in use by another Halfmark server (process ${pid}). ` +
            'Stop that server first, or start this one with another DATA_DIR (or a DATABASE_URL).',
        );
      }
      rmSync(file, { force: true }); // stale lock
    }
  }
  throw new DataDirLockedError(`Could not take the lock on ${dataDir}.`);
}
