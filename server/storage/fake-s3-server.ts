import { mkdtempSync, rmSync } from 'node:fs';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import S3rver from 's3rver';

/**
 * A local S3-compatible server (the s3rver package) for development and tests: objects in a temporary folder,
 * the given buckets created at start. Credentials are the fake's fixed pair (S3RVER/S3RVER).
 */
export async function startFakeS3(opts: { port?: number; buckets: string[] }) {
  const dir = mkdtempSync(path.join(tmpdir(), 'halfmark-s3-'));
  const server = new S3rver({
    port: opts.port ?? 0,
    address: '127.0.0.1',
    silent: true,
    directory: dir,
    configureBuckets: opts.buckets.map((name) => ({ name, configs: [] })),
  });
  const address = (await server.run()) as AddressInfo;
  return {
    endpoint: `http://127.0.0.1:${address.port}`,
    credentials: { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' },
    async stop() {
      await server.close();
      rmSync(dir, { recursive: true, force: true });
    },
  };
}
