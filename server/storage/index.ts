import path from 'node:path';
import type { Database } from '../../db/client';
import { LocalDiskStore } from './local-disk';
import { S3Store } from './s3';

/** Where attachment bytes live. Keys are made by the server (never from a client's file name). */
export interface ObjectStore {
  readonly kind: 'disk' | 's3';
  put(key: string, body: Buffer, contentType: string): Promise<void>;
  /** The bytes, or null when the key is not there. */
  get(key: string): Promise<Buffer | null>;
  delete(key: string): Promise<void>;
}

/**
 * The store for a database's server. Chosen from the environment once: STORAGE=s3 with S3_BUCKET (and S3_ENDPOINT,
 * S3_REGION, AWS credentials as the SDK reads them) uses object storage; otherwise files go under DATA_DIR/attachments,
 * the embedded default. Tests install their own with `useStorage`.
 */
const stores = new WeakMap<Database, ObjectStore>();

export function useStorage(database: Database, store: ObjectStore): void {
  stores.set(database, store);
}

export function storageFor(database: Database, env: NodeJS.ProcessEnv = process.env): ObjectStore {
  let s = stores.get(database);
  if (!s) {
    s = storageFromEnv(env);
    stores.set(database, s);
  }
  return s;
}

export function storageFromEnv(env: NodeJS.ProcessEnv): ObjectStore {
  if (env.STORAGE === 's3') {
    if (!env.S3_BUCKET) throw new Error('STORAGE=s3 needs S3_BUCKET.');
    return new S3Store({
      bucket: env.S3_BUCKET,
      endpoint: env.S3_ENDPOINT || undefined,
      region: env.S3_REGION || 'us-east-1',
      forcePathStyle: Boolean(env.S3_ENDPOINT),
    });
  }
  return new LocalDiskStore(path.join(path.resolve(env.DATA_DIR ?? './data'), 'attachments'));
}

export { LocalDiskStore, S3Store };
