import { DeleteObjectCommand, GetObjectCommand, NoSuchKey, PutObjectCommand, S3Client, type S3ClientConfig } from '@aws-sdk/client-s3';
import type { ObjectStore } from './index';

export interface S3StoreOptions {
  bucket: string;
  endpoint?: string;
  region: string;
  /** Path-style addressing, for S3-compatible servers on a plain host name (and the fake in tests). */
  forcePathStyle?: boolean;
  credentials?: S3ClientConfig['credentials'];
}

/** Object storage through the AWS SDK (S3 or any S3-compatible server). */
export class S3Store implements ObjectStore {
  readonly kind = 's3' as const;
  private readonly client: S3Client;
  constructor(private readonly o: S3StoreOptions) {
    this.client = new S3Client({
      region: o.region,
      endpoint: o.endpoint,
      forcePathStyle: o.forcePathStyle,
      credentials: o.credentials,
    });
  }

  async put(key: string, body: Buffer, contentType: string): Promise<void> {
    await this.client.send(new PutObjectCommand({ Bucket: this.o.bucket, Key: key, Body: body, ContentType: contentType }));
  }

  async get(key: string): Promise<Buffer | null> {
    try {
      const out = await this.client.send(new GetObjectCommand({ Bucket: this.o.bucket, Key: key }));
      if (!out.Body) return null;
      return Buffer.from(await out.Body.transformToByteArray());
    } catch (err) {
      if (err instanceof NoSuchKey || (err as { name?: string }).name === 'NoSuchKey') return null;
      throw err;
    }
  }

  async delete(key: string): Promise<void> {
    await this.client.send(new DeleteObjectCommand({ Bucket: this.o.bucket, Key: key }));
  }

  destroy(): void {
    this.client.destroy();
  }
}
