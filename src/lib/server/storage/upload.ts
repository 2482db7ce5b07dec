// Reading an attachment upload: multipart/form-data with a `file` field, or the raw bytes as the
// body with the name in `?filename=`. Never more than the limit is held in memory.
import { malformed, RegistryError } from '../registry/errors';
import { MAX_ATTACHMENT_BYTES, tooLarge } from './attachments';

/** Room for the multipart boundaries and part headers around the file itself. */
const MULTIPART_OVERHEAD = 64 * 1024;

function isTooLarge(e: unknown): boolean {
  return typeof e === 'object' && e !== null && (e as { status?: unknown }).status === 413;
}

/** The body's bytes, at most `max` (413 beyond, also when the server's own body limit stops the stream). */
export async function readBytes(request: Request, max: number): Promise<Uint8Array> {
  const declared = Number(request.headers.get('content-length') ?? NaN);
  if (declared > max) throw tooLarge(declared);
  if (!request.body) return new Uint8Array(0);
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let size = 0;
  try {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      size += value.byteLength;
      if (size > max) {
        await reader.cancel();
        throw tooLarge(size);
      }
      chunks.push(value);
    }
  } catch (e) {
    if (e instanceof RegistryError) throw e;
    // the server's own request body limit stopped the stream before this limit was reached
    if (isTooLarge(e)) {
      throw new RegistryError(
        413,
        'too-large',
        `the server's request body limit (BODY_SIZE_LIMIT) is below ${max} bytes and stopped this upload: ${(e as Error).message}`,
        {
          limit: max
        }
      );
    }
    throw e;
  }
  return new Uint8Array(Buffer.concat(chunks));
}

export async function readUpload(
  request: Request,
  url: URL
): Promise<{ filename: string; bytes: Uint8Array }> {
  const type = request.headers.get('content-type') ?? '';
  if (/^multipart\/form-data/i.test(type)) {
    const raw = await readBytes(request, MAX_ATTACHMENT_BYTES + MULTIPART_OVERHEAD);
    let form: FormData;
    try {
      form = await new Response(Buffer.from(raw), { headers: { 'content-type': type } }).formData();
    } catch (e) {
      throw malformed(`the multipart body could not be read: ${(e as Error).message}`);
    }
    const file = form.get('file');
    if (!file || typeof file === 'string')
      throw malformed("the multipart body needs a file in the field 'file'", { field: 'file' });
    if (file.size > MAX_ATTACHMENT_BYTES) throw tooLarge(file.size);
    return { filename: file.name, bytes: new Uint8Array(await file.arrayBuffer()) };
  }
  const filename = url.searchParams.get('filename');
  if (!filename)
    throw malformed('send multipart/form-data with a `file` field, or the raw bytes with ?filename=NAME', {
      field: 'filename'
    });
  return { filename, bytes: await readBytes(request, MAX_ATTACHMENT_BYTES) };
}
