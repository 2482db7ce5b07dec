// Attachment bytes in an S3-compatible store through the AWS SDK: the local fake on loopback in
// development and tests, S3_ENDPOINT (or AWS itself when unset) in production.
import { DeleteObjectCommand, GetObjectCommand, PutObjectCommand, S3Client } from '@aws-sdk/client-s3';
import { config } from '../config';

let client: S3Client | null = null;

export function s3(): S3Client {
  if (!client) {
    const c = config();
    client = new S3Client({
      region: c.s3Region,
      endpoint: c.s3Endpoint,
      // path-style addressing: the local fake and most self-hosted stores have no per-bucket host names
      forcePathStyle: Boolean(c.s3Endpoint),
      credentials:
        c.s3AccessKeyId && c.s3SecretAccessKey
          ? { accessKeyId: c.s3AccessKeyId, secretAccessKey: c.s3SecretAccessKey }
          : undefined
    });
  }
  return client;
}

export async function putObject(
  key: string,
  body: Uint8Array,
  contentType: string,
  sha256Hex: string
): Promise<void> {
  await s3().send(
    new PutObjectCommand({
      Bucket: config().s3Bucket,
      Key: key,
      Body: body,
      ContentType: contentType,
      ContentLength: body.byteLength,
      Metadata: { sha256: sha256Hex }
    })
  );
}

export async function getObjectBytes(key: string): Promise<Uint8Array> {
  const out = await s3().send(new GetObjectCommand({ Bucket: config().s3Bucket, Key: key }));
  if (!out.Body) throw new Error(`the store returned no body for ${key}`);
  return out.Body.transformToByteArray();
}

export async function deleteObject(key: string): Promise<void> {
  await s3().send(new DeleteObjectCommand({ Bucket: config().s3Bucket, Key: key }));
}
