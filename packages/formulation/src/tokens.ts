// A lexical scan of an expression that mirrors the mathjs tokenizer closely enough to find where a
// construct of the syntax tree was written: mathjs trees carry no source positions.
import { parse } from 'mathjs';

export type TokenKind = 'name' | 'number' | 'string' | 'open-matrix' | 'open-index' | 'symbol';
export interface Token {
  kind: TokenKind;
  text: string;
  start: number;
}

const OPERATORS = ['>>>', '.*', './', '.^', "'", '==', '!=', '<=', '>=', '<<', '>>', '++', '--', '^|'].sort(
  (a, b) => b.length - a.length
);

const isDigit = (c: string | undefined) => c !== undefined && c >= '0' && c <= '9';

/** Tokens of `text` with their 0-based start index; strings and comments are single tokens or skipped. */
export function tokenize(text: string): Token[] {
  const tokens: Token[] = [];
  let i = 0;
  const valueEnded = () => {
    const last = tokens[tokens.length - 1];
    return (
      !!last &&
      (last.kind === 'name' ||
        last.kind === 'number' ||
        last.kind === 'string' ||
        last.text === ')' ||
        last.text === ']' ||
        last.text === "'")
    );
  };
  while (i < text.length) {
    const c = text[i];
    if (c === ' ' || c === '\t' || c === '\n' || c === '\r') {
      i++;
      continue;
    }
    if (c === '#') {
      while (i < text.length && text[i] !== '\n') i++;
      continue;
    }
    if (c === '"' || (c === "'" && !valueEnded())) {
      const start = i;
      i++;
      while (i < text.length && text[i] !== c) i += text[i] === '\\' ? 2 : 1;
      i++;
      tokens.push({ kind: 'string', text: text.slice(start, Math.min(i, text.length)), start });
      continue;
    }
    if (isDigit(c) || (c === '.' && isDigit(text[i + 1]))) {
      const start = i;
      while (i < text.length) {
        const d = text[i];
        if (isDigit(d) || d === '.' || /[a-zA-Z]/.test(d)) {
          if (
            (d === 'e' || d === 'E') &&
            (text[i + 1] === '+' || text[i + 1] === '-') &&
            !/^0[xXbBoO]/.test(text.slice(start, i))
          )
            i++;
          i++;
        } else break;
      }
      tokens.push({ kind: 'number', text: text.slice(start, i), start });
      continue;
    }
    if (parse.isAlpha(c, text[i - 1] ?? '', text[i + 1] ?? '')) {
      const start = i;
      while (
        i < text.length &&
        (parse.isAlpha(text[i], text[i - 1] ?? '', text[i + 1] ?? '') || isDigit(text[i]))
      )
        i++;
      tokens.push({ kind: 'name', text: text.slice(start, i), start });
      continue;
    }
    if (c === '[') {
      tokens.push({ kind: valueEnded() ? 'open-index' : 'open-matrix', text: c, start: i });
      i++;
      continue;
    }
    const op = OPERATORS.find((o) => text.startsWith(o, i));
    if (op) {
      tokens.push({ kind: 'symbol', text: op, start: i });
      i += op.length;
      continue;
    }
    const width = (c.codePointAt(0) ?? 0) > 0xffff ? 2 : 1;
    tokens.push({ kind: 'symbol', text: text.slice(i, i + width), start: i });
    i += width;
  }
  return tokens;
}
