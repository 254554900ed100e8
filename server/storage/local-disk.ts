import { mkdir, readFile, rename, rm, writeFile } from 'node:fs/promises';
import path from 'node:path';
import type { ObjectStore } from './index';

const KEY = /^[a-z0-9][a-z0-9/._-]{0,200}$/;

/** Files under one folder; keys become relative paths, so only server-made keys (checked here) are accepted. */
export class LocalDiskStore implements ObjectStore {
  readonly kind = 'disk' as const;
  constructor(private readonly root: string) {}

  private file(key: string): string {
    if (!KEY.test(key) || key.includes('..')) throw new Error(`Not a storage key: ${key}`);
    return path.join(this.root, key);
  }

  async put(key: string, body: Buffer, _contentType?: string): Promise<void> {
    const file = this.file(key);
    await mkdir(path.dirname(file), { recursive: true });
    // Write then rename, so a crash never leaves half a file under the final name.
    const tmp = `${file}.part`;
    await writeFile(tmp, body);
    await rename(tmp, file);
  }

  async get(key: string): Promise<Buffer | null> {
    try {
      return await readFile(this.file(key));
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code === 'ENOENT') return null;
      throw err;
    }
  }

  async delete(key: string): Promise<void> {
    await rm(this.file(key), { force: true });
  }
}
