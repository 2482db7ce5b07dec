import { CELL_FACTS } from './cells';
import { ALLOWED_FUNCTIONS, DERIVED_FUNCTIONS } from './limits';
import type { CellName, ExpressionField } from './types';

const PHYSICAL = ['x', 'y', 'z'] as const;

/**
 * The symbols an expression of `field` may use, in a fixed order (formulation-format.md, "Custom strain block"):
 * constants see only `pi`; `shape` and `definitions` the natural coordinates (and, in the document, earlier definitions);
 * `B`, `weight`, `rigid_modes`, `patch` and `convergence` the per-point and per-node quantities; `D` sees E, nu, thickness.
 */
export function symbolsForField(
  cell: CellName,
  coordinates: readonly string[] | undefined,
  field: ExpressionField
): string[] {
  const facts = CELL_FACTS[cell];
  const coords = coordinates && coordinates.length > 0 ? [...coordinates] : [...facts.coordinates];
  switch (field) {
    case 'nodes':
    case 'material':
    case 'thickness':
    case 'area':
    case 'quadrature.points':
      return ['pi'];
    case 'definitions':
    case 'shape':
    case 'derivatives':
      return [...coords, 'pi'];
    case 'D':
      return ['E', 'nu', 'thickness', 'pi'];
    case 'B':
    case 'weight':
    case 'rigid_modes':
    case 'patch.displacement':
    case 'convergence.displacement':
    case 'convergence.body_force': {
      const dim = facts.dim;
      const physical = PHYSICAL.slice(0, dim);
      return [
        'N',
        ...physical.map((p) => `dNd${p}`),
        ...coords.map((c) => `dNd${c}`),
        ...physical,
        ...coords,
        'detJ',
        'thickness',
        'area',
        'E',
        'nu',
        'pi'
      ];
    }
  }
}

/** Names an author may not give to a coordinate, a definition, a parameter, a dof or a strain component. */
export const RESERVED_NAMES: ReadonlySet<string> = new Set([
  'pi',
  'e',
  'N',
  'x',
  'y',
  'z',
  'dNdx',
  'dNdy',
  'dNdz',
  'detJ',
  'thickness',
  'area',
  'E',
  'nu',
  'true',
  'false',
  'null',
  'undefined',
  'NaN',
  'Infinity',
  'mod',
  'to',
  'in',
  'and',
  'or',
  'xor',
  'not',
  'end',
  ...ALLOWED_FUNCTIONS,
  ...DERIVED_FUNCTIONS
]);

/** Plain ASCII names: a letter, then letters, digits or underscores; at most 32 characters. */
export const NAME_PATTERN = /^[A-Za-z][A-Za-z0-9_]{0,31}$/;

/** Why `name` cannot name something the author defines, or null when it can. */
export function nameProblem(name: string, what: string): string | null {
  if (!NAME_PATTERN.test(name)) {
    const odd = [...name].find((ch) => ch.codePointAt(0)! > 0x7e || ch.codePointAt(0)! < 0x21);
    const detail = odd ? ` (it contains ${describeCharacter(odd)})` : '';
    return `'${printable(name)}' is not a valid ${what} name${detail}: use an ASCII letter followed by letters, digits or '_', at most 32 characters`;
  }
  if (RESERVED_NAMES.has(name) || /^dNd/.test(name))
    return `'${name}' is reserved by the format and cannot name a ${what}`;
  return null;
}

/** "U+200B" and, for the invisible or confusable ones, what it is. */
export function describeCharacter(ch: string): string {
  const cp = ch.codePointAt(0)!;
  const hex = `U+${cp.toString(16).toUpperCase().padStart(4, '0')}`;
  const named: Record<number, string> = {
    0x00: 'a NUL character',
    0x09: 'a tab',
    0x200b: 'a zero-width space',
    0x200c: 'a zero-width non-joiner',
    0x200d: 'a zero-width joiner',
    0x2060: 'a word joiner',
    0xfeff: 'a byte-order mark',
    0x00a0: 'a no-break space',
    0x202a: 'a bidirectional embedding control',
    0x202b: 'a bidirectional embedding control',
    0x202c: 'a bidirectional pop control',
    0x202d: 'a bidirectional override control',
    0x202e: 'a bidirectional override control',
    0x2066: 'a bidirectional isolate control',
    0x2067: 'a bidirectional isolate control',
    0x2068: 'a bidirectional isolate control',
    0x2069: 'a bidirectional isolate control'
  };
  if (named[cp]) return `${hex}, ${named[cp]}`;
  if (cp < 0x20 || (cp >= 0x7f && cp < 0xa0)) return `${hex}, a control character`;
  return `${hex} '${ch}'`;
}

/** The text with invisible and control characters shown as \u{…}, for quoting in messages. */
export function printable(text: string, max = 60): string {
  let out = '';
  for (const ch of text) {
    const cp = ch.codePointAt(0)!;
    const invisible =
      cp < 0x20 ||
      (cp >= 0x7f && cp < 0xa0) ||
      (cp >= 0x200b && cp <= 0x200f) ||
      (cp >= 0x202a && cp <= 0x202e) ||
      (cp >= 0x2060 && cp <= 0x2069) ||
      cp === 0xfeff;
    out += invisible ? `\\u{${cp.toString(16).toUpperCase()}}` : ch;
    if (out.length >= max) return out + '…';
  }
  return out;
}
