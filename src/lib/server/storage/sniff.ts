// The type of an attachment, read from its bytes (never from its name): a PDF by its magic bytes,
// JSON that parses, CSV that is text whose rows all have the same number of fields.
import { RegistryError } from '../registry/errors';

export type AttachmentKind = 'pdf' | 'csv' | 'json';

export const MEDIA_TYPES: Record<AttachmentKind, string> = {
  pdf: 'application/pdf',
  csv: 'text/csv; charset=utf-8',
  json: 'application/json'
};

const EXTENSIONS: Record<string, AttachmentKind> = { pdf: 'pdf', csv: 'csv', json: 'json' };

/** "%PDF-" (ISO 32000-1, 7.5.2: the header line); some writers put a few bytes before it, so look in the first 1024. */
function isPdf(bytes: Uint8Array): boolean {
  const head = Buffer.from(bytes.subarray(0, 1024)).toString('latin1');
  return head.includes('%PDF-');
}

function utf8Text(bytes: Uint8Array): string | null {
  try {
    const text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
    // control characters other than tab, line feed and carriage return mean binary data
    // eslint-disable-next-line no-control-regex
    if (/[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F]/.test(text)) return null;
    return text.replace(/^\uFEFF/, '');
  } catch {
    return null;
  }
}

/** Field counts of each record for one delimiter, honouring double-quoted fields (RFC 4180). */
function fieldCounts(text: string, delimiter: string): number[] | null {
  const counts: number[] = [];
  let fields = 1;
  let quoted = false;
  let atFieldStart = true;
  let recordHasContent = false;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (quoted) {
      if (c === '"') {
        if (text[i + 1] === '"') i++;
        else quoted = false;
      }
      continue;
    }
    if (c === '"' && atFieldStart) {
      quoted = true;
      atFieldStart = false;
      recordHasContent = true;
    } else if (c === delimiter) {
      fields++;
      atFieldStart = true;
      recordHasContent = true;
    } else if (c === '\n' || c === '\r') {
      if (c === '\r' && text[i + 1] === '\n') i++;
      if (recordHasContent) counts.push(fields);
      fields = 1;
      atFieldStart = true;
      recordHasContent = false;
    } else {
      atFieldStart = false;
      if (c !== ' ' && c !== '\t') recordHasContent = true;
    }
  }
  if (quoted) return null;
  if (recordHasContent) counts.push(fields);
  return counts;
}

/** The delimiter (comma, semicolon or tab) for which every record has the same field count, at least two. */
export function csvDelimiter(text: string): string | null {
  for (const d of [',', ';', '\t']) {
    const counts = fieldCounts(text, d);
    if (!counts || counts.length === 0) continue;
    if (counts[0] >= 2 && counts.every((n) => n === counts[0])) return d;
  }
  return null;
}

export interface Sniffed {
  kind: AttachmentKind;
  mediaType: string;
}

function unsupported(message: string): RegistryError {
  return new RegistryError(415, 'unsupported-media-type', message, {
    accepted: ['application/pdf', 'text/csv', 'application/json']
  });
}

/** Decides the type from the content; a name whose extension says otherwise is refused. */
export function sniffAttachment(bytes: Uint8Array, filename: string): Sniffed {
  if (bytes.byteLength === 0) throw new RegistryError(422, 'empty-attachment', `'${filename}' is empty`);
  let kind: AttachmentKind | null = null;
  if (isPdf(bytes)) kind = 'pdf';
  else {
    const text = utf8Text(bytes);
    if (text !== null) {
      const trimmed = text.trim();
      if (trimmed.startsWith('{') || trimmed.startsWith('[')) {
        try {
          JSON.parse(trimmed);
          kind = 'json';
        } catch (e) {
          throw new RegistryError(
            422,
            'invalid-json',
            `'${filename}' looks like JSON but does not parse: ${(e as Error).message}`
          );
        }
      } else if (csvDelimiter(text)) kind = 'csv';
      else {
        throw unsupported(
          `'${filename}' is text but neither JSON nor CSV (CSV needs at least two fields per row, the same number in every row, separated by commas, semicolons or tabs)`
        );
      }
    }
  }
  if (!kind)
    throw unsupported(
      `'${filename}' is neither a PDF, CSV nor JSON file: attachments are derivation notes (PDF) and reference data (CSV, JSON)`
    );
  const ext = /\.([A-Za-z0-9]+)$/.exec(filename)?.[1]?.toLowerCase();
  if (ext && ext in EXTENSIONS && EXTENSIONS[ext] !== kind) {
    throw unsupported(
      `'${filename}' is named .${ext} but its content is ${kind.toUpperCase()}: rename it or upload the right file`
    );
  }
  return { kind, mediaType: MEDIA_TYPES[kind] };
}
