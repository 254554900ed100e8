import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startFakeS3 } from './fake-s3-server';
import { LocalDiskStore } from './local-disk';
import { S3Store } from './s3';
import type { ObjectStore } from './index';

let fake: Awaited<ReturnType<typeof startFakeS3>>;
let s3: S3Store;
const dir = mkdtempSync(path.join(tmpdir(), 'halfmark-disk-'));

beforeAll(async () => {
  fake = await startFakeS3({ buckets: ['halfmark-test'] });
  s3 = new S3Store({ bucket: 'halfmark-test', endpoint: fake.endpoint, region: 'us-east-1', forcePathStyle: true, credentials: fake.credentials });
});
afterAll(async () => {
  s3?.destroy();
  await fake?.stop();
  rmSync(dir, { recursive: true, force: true });
});

const stores: [string, () => ObjectStore][] = [
  ['local disk', () => new LocalDiskStore(dir)],
  ['S3 (fake server)', () => s3],
];

describe.each(stores)('%s store', (_name, make) => {
  it('puts, gets back byte for byte, and deletes', async () => {
    const store = make();
    const body = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0, 1, 2, 255, 254]);
    await store.put('lab-1/abc', body, 'image/png');
    expect(Buffer.compare((await store.get('lab-1/abc'))!, body)).toBe(0);
    await store.delete('lab-1/abc');
    expect(await store.get('lab-1/abc')).toBeNull();
  });

  it('answers null for a key never stored', async () => {
    expect(await make().get('lab-1/never')).toBeNull();
  });
});

describe('local disk store', () => {
  it('refuses keys that could leave its folder', async () => {
    const store = new LocalDiskStore(dir);
    await expect(store.put('../escape', Buffer.from('x'), 'text/plain')).rejects.toThrow(/Not a storage key/);
    await expect(store.get('/etc/passwd')).rejects.toThrow(/Not a storage key/);
  });
});
