// Positions in the document: offsets to 1-based line and column, and, for a YAML scalar, the source
// offset of every character of its value (quotes, escapes, folding and block indentation undone), so
// a fault inside an expression is reported where the author sees it.
import type { Scalar } from 'yaml';

/** Offset → 1-based line and column (UTF-16 code units, as editors count them). */
export class LineIndex {
  private readonly starts: number[] = [0];
  constructor(private readonly source: string) {
    for (let i = 0; i < source.length; i++) if (source.charCodeAt(i) === 10) this.starts.push(i + 1);
  }
  position(offset: number): { line: number; column: number } {
    const o = Math.max(0, Math.min(offset, this.source.length));
    let lo = 0;
    let hi = this.starts.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (this.starts[mid] <= o) lo = mid;
      else hi = mid - 1;
    }
    return { line: lo + 1, column: o - this.starts[lo] + 1 };
  }
}

/** Source offsets of the characters of a scalar's string value, and where its content starts. */
export interface ScalarMap {
  /** offset of the first content character (after a quote or a block header) */
  start: number;
  /** offsets[i] = source offset of value character i; null when the value could not be traced */
  offsets: number[] | null;
  /** offset just after the last content character */
  end: number;
}

const isBlank = (c: string | undefined) => c === ' ' || c === '\t';

interface Out {
  chars: string[];
  offsets: number[];
  /** true where the character is literal white space that folding may trim */
  trimmable: boolean[];
}
const push = (out: Out, ch: string, offset: number, trimmable = false) => {
  out.chars.push(ch);
  out.offsets.push(offset);
  out.trimmable.push(trimmable);
};

/** Flow scalar folding (YAML 1.2 §7.3): trailing blanks trimmed, one break → space, n breaks → n−1 newlines. */
function foldFlow(src: string, start: number, end: number, kind: 'plain' | 'single' | 'double'): Out {
  const out: Out = { chars: [], offsets: [], trimmable: [] };
  let i = start;
  while (i < end) {
    const c = src[i];
    if (c === '\r' && src[i + 1] === '\n') {
      i++;
      continue;
    }
    if (c === '\n') {
      while (out.trimmable.length && out.trimmable[out.trimmable.length - 1]) {
        out.chars.pop();
        out.offsets.pop();
        out.trimmable.pop();
      }
      const breakAt = i;
      i++;
      const empties: number[] = [];
      for (;;) {
        while (i < end && isBlank(src[i])) i++;
        if (src[i] === '\r' && src[i + 1] === '\n') i++;
        if (i < end && src[i] === '\n') {
          empties.push(i);
          i++;
          continue;
        }
        break;
      }
      if (empties.length === 0) push(out, ' ', breakAt, false);
      else for (const e of empties) push(out, '\n', e, false);
      continue;
    }
    if (kind === 'single' && c === "'" && src[i + 1] === "'") {
      push(out, "'", i);
      i += 2;
      continue;
    }
    if (kind === 'double' && c === '\\') {
      const at = i;
      const e = src[i + 1];
      if (e === '\n' || (e === '\r' && src[i + 2] === '\n')) {
        // escaped line break: no space, leading blanks of the next line dropped
        i += e === '\r' ? 3 : 2;
        while (i < end && isBlank(src[i])) i++;
        continue;
      }
      const simple: Record<string, string> = {
        '0': '\0',
        a: '\x07',
        b: '\b',
        t: '\t',
        '\t': '\t',
        n: '\n',
        v: '\v',
        f: '\f',
        r: '\r',
        e: '\x1b',
        ' ': ' ',
        '"': '"',
        '/': '/',
        '\\': '\\',
        N: '\x85',
        _: '\xa0',
        L: '\u2028',
        P: '\u2029'
      };
      if (e !== undefined && e in simple) {
        push(out, simple[e], at);
        i += 2;
        continue;
      }
      const width = e === 'x' ? 2 : e === 'u' ? 4 : e === 'U' ? 8 : 0;
      if (width > 0) {
        const hex = src.slice(i + 2, i + 2 + width);
        const cp = /^[0-9a-fA-F]+$/.test(hex) && hex.length === width ? parseInt(hex, 16) : NaN;
        if (Number.isFinite(cp) && cp <= 0x10ffff) {
          for (const unit of String.fromCodePoint(cp))
            for (let k = 0; k < unit.length; k++) push(out, unit[k], at);
          i += 2 + width;
          continue;
        }
      }
      push(out, c, at);
      i++;
      continue;
    }
    push(out, c, i, isBlank(c));
    i++;
  }
  return out;
}

/** Block scalar body (YAML 1.2 §8.1): indentation removed; folded style joins plain lines with spaces. */
function foldBlock(src: string, bodyStart: number, body: string, folded: boolean): Out {
  const out: Out = { chars: [], offsets: [], trimmable: [] };
  const lines: { text: string; at: number }[] = [];
  let at = bodyStart;
  for (const raw of body.split('\n')) {
    lines.push({ text: raw.endsWith('\r') ? raw.slice(0, -1) : raw, at });
    at += raw.length + 1;
  }
  const first = lines.find((l) => l.text.trim() !== '');
  if (!first) return out;
  const indent = first.text.length - first.text.replace(/^ +/, '').length;
  let previous: 'none' | 'text' | 'more' = 'none';
  let pending: number[] = [];
  for (const line of lines) {
    if (line.text.trim() === '' && line.text.length <= indent) {
      pending.push(line.at + Math.min(indent, line.text.length));
      continue;
    }
    const content = line.text.slice(indent);
    const type = isBlank(content[0]) ? 'more' : 'text';
    if (previous !== 'none') {
      if (!folded) {
        push(out, '\n', line.at - 1);
        for (const p of pending) push(out, '\n', p);
      } else if (previous === 'text' && type === 'text') {
        if (pending.length === 0) push(out, ' ', line.at - 1);
        else for (const p of pending) push(out, '\n', p);
      } else {
        push(out, '\n', line.at - 1);
        for (const p of pending) push(out, '\n', p);
      }
    } else {
      for (const p of pending) push(out, '\n', p);
    }
    pending = [];
    for (let k = 0; k < content.length; k++) push(out, content[k], line.at + indent + k);
    previous = type;
  }
  return out;
}

/** Traces every character of a string scalar back to the source; `offsets` is null when the trace does not match the parsed value. */
export function scalarMap(src: string, node: Scalar): ScalarMap {
  const [start, valueEnd] = node.range ?? [0, 0, 0];
  const value = typeof node.value === 'string' ? node.value : String(node.value);
  let out: Out | null = null;
  let contentStart = start;
  let contentEnd = valueEnd;
  switch (node.type) {
    case 'PLAIN':
      out = foldFlow(src, start, valueEnd, 'plain');
      break;
    case 'QUOTE_SINGLE':
    case 'QUOTE_DOUBLE':
      contentStart = start + 1;
      contentEnd = Math.max(contentStart, valueEnd - 1);
      out = foldFlow(src, contentStart, contentEnd, node.type === 'QUOTE_SINGLE' ? 'single' : 'double');
      break;
    case 'BLOCK_LITERAL':
    case 'BLOCK_FOLDED': {
      const token = node.srcToken as { source?: string } | undefined;
      const newline = src.indexOf('\n', start);
      const bodyStart = newline < 0 ? valueEnd : newline + 1;
      contentStart = bodyStart;
      const body = token?.source ?? src.slice(bodyStart, valueEnd);
      if (src.startsWith(body, bodyStart))
        out = foldBlock(src, bodyStart, body, node.type === 'BLOCK_FOLDED');
      break;
    }
  }
  if (out) {
    const text = out.chars.join('');
    // comparing without trailing white space: chomping only changes trailing line breaks, and expressions are trimmed
    if (text.trimEnd() === value.trimEnd()) {
      const first = out.offsets.find((o, k) => !/\s/.test(out!.chars[k]));
      return { start: first ?? contentStart, offsets: out.offsets, end: contentEnd };
    }
  }
  return { start: contentStart, offsets: null, end: contentEnd };
}

/** The source offset of character `index` of the value (or of its end), falling back to the scalar's start. */
export function offsetOf(map: ScalarMap, index: number): number {
  if (!map.offsets) return map.start;
  if (map.offsets.length === 0) return map.start;
  if (index < map.offsets.length) return map.offsets[Math.max(0, index)];
  return map.offsets[map.offsets.length - 1] + 1;
}
