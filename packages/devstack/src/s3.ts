// A local S3-compatible store on loopback (s3rver) with the attachments bucket.
import { mkdirSync } from 'node:fs';
import S3rver from 's3rver';

export interface RunningS3 {
  endpoint: string;
  bucket: string;
  accessKeyId: string;
  secretAccessKey: string;
  stop(): Promise<void>;
}

export async function startS3(opts: { port: number; directory: string; bucket: string }): Promise<RunningS3> {
  mkdirSync(opts.directory, { recursive: true });
  const server = new S3rver({
    port: opts.port,
    address: '127.0.0.1',
    directory: opts.directory,
    silent: true,
    configureBuckets: [{ name: opts.bucket, configs: [] }]
  });
  await server.run();
  return {
    endpoint: `http://127.0.0.1:${opts.port}`,
    bucket: opts.bucket,
    // s3rver's fixed local credentials
    accessKeyId: 'S3RVER',
    secretAccessKey: 'S3RVER',
    stop: () => server.close()
  };
}
