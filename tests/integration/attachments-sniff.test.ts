// Typing attachments from their bytes (no services needed): PDF by its header, JSON that parses,
// CSV whose rows agree on their field count; names never decide the type.
import { describe, expect, it } from 'vitest';
import { csvDelimiter, sniffAttachment } from '../../src/lib/server/storage/sniff';
import { RegistryError } from '../../src/lib/server/registry/errors';

const bytes = (s: string) => new TextEncoder().encode(s);

function refusal(f: () => unknown): RegistryError {
  try {
    f();
  } catch (e) {
    expect(e).toBeInstanceOf(RegistryError);
    return e as RegistryError;
  }
  throw new Error('expected a refusal');
}

describe('sniffAttachment', () => {
  it('recognises a PDF by the %PDF- header of ISO 32000-1 §7.5.2, whatever its name', () => {
    expect(sniffAttachment(bytes('%PDF-1.4\n%âãÏÓ\n'), 'notes')).toEqual({
      kind: 'pdf',
      mediaType: 'application/pdf'
    });
    expect(sniffAttachment(bytes('%PDF-2.0\n'), 'notes.PDF').kind).toBe('pdf');
  });

  it('recognises JSON objects and arrays that parse (RFC 8259)', () => {
    expect(sniffAttachment(bytes('{"a": [1, 2]}'), 'a.json').kind).toBe('json');
    expect(sniffAttachment(bytes('\uFEFF[1, 2, 3]\n'), 'series').kind).toBe('json');
  });

  it('recognises CSV with comma, semicolon or tab delimiters and quoted fields (RFC 4180)', () => {
    expect(sniffAttachment(bytes('h,l2\r\n0.5,0.01\r\n0.25,0.0025\r\n'), 'a.csv').kind).toBe('csv');
    expect(csvDelimiter('a;b;c\n1;2;3\n')).toBe(';');
    expect(csvDelimiter('a\tb\n1\t2\n')).toBe('\t');
    expect(csvDelimiter('name,note\n"quad, four-node","said ""fine"""\n\n')).toBe(',');
    expect(csvDelimiter('name,note\n"line\nbreak",x\n')).toBe(',');
  });

  it('refuses rows that disagree, a single column, an open quote and prose (415)', () => {
    expect(csvDelimiter('a,b,c\n1,2\n')).toBeNull();
    expect(csvDelimiter('1\n2\n3\n')).toBeNull();
    expect(csvDelimiter('a,b\n"open,1\n')).toBeNull();
    expect(refusal(() => sniffAttachment(bytes('Plain words here.\n'), 'notes.txt')).status).toBe(415);
  });

  it('refuses binary content that is none of the three (415)', () => {
    const png = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13]);
    const e = refusal(() => sniffAttachment(png, 'figure.png'));
    expect(e.status).toBe(415);
    expect(e.message).toContain('neither a PDF, CSV nor JSON');
    expect(refusal(() => sniffAttachment(new Uint8Array([0xff, 0xfe, 0x00, 0x41]), 'x.csv')).status).toBe(
      415
    );
  });

  it('refuses a name whose extension contradicts the content (415), and JSON that does not parse (422)', () => {
    const e = refusal(() => sniffAttachment(bytes('{"a": 1}'), 'table.csv'));
    expect(e.status).toBe(415);
    expect(e.message).toContain('named .csv but its content is JSON');
    expect(refusal(() => sniffAttachment(bytes('{"a": '), 'a.json')).status).toBe(422);
    expect(refusal(() => sniffAttachment(new Uint8Array(0), 'a.json')).status).toBe(422);
  });
});
