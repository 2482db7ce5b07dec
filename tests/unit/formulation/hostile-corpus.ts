// Hostile documents: each must be refused with a clear message, quickly, leaving the process able
// to serve the next valid document. Shared by the tests and by the sandbox benchmark (which prints
// the slowest refusal time; tests never assert on time).
import { formulationDoc, quoted } from './documents';

export interface HostileDocument {
  name: string;
  source: () => string;
  /** a diagnostic message must match */
  refusal: RegExp;
}

const shape = (first: string) => formulationDoc({ shape: [first, 'xi', 'eta'] });
const defs = (definitions: string[], first = 'xi') =>
  formulationDoc({ definitions, shape: ['1 - xi - eta', first, 'eta'] });

function aliasBomb(): string {
  const lines = ['a0: &a0 ["lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol"]'];
  for (let i = 1; i <= 9; i++)
    lines.push(`a${i}: &a${i} [${Array.from({ length: 10 }, () => `*a${i - 1}`).join(', ')}]`);
  return lines.join('\n') + '\n' + formulationDoc({ extra: 'summary: *a9' });
}

export const HOSTILE: HostileDocument[] = [
  {
    name: '10,000 nested parentheses',
    source: () => shape('('.repeat(10_000) + 'xi' + ')'.repeat(10_000)),
    refusal: /expression is 20002 bytes; the limit is 4096/
  },
  {
    name: '1,500 nested parentheses (under the size limit)',
    source: () => shape('('.repeat(1500) + 'xi' + ')'.repeat(1500)),
    refusal: /nesting exceeds 64 levels/
  },
  {
    name: 'functions nested 200 deep',
    source: () => shape('sin('.repeat(200) + 'xi' + ')'.repeat(200)),
    refusal: /nesting exceeds 64 levels/
  },
  {
    name: 'a chain of 3,000 unary minus signs',
    source: () => shape('-'.repeat(3000) + 'xi'),
    refusal: /is nested 3001 levels deep; the limit is 1000/
  },
  {
    name: 'an exponent tower of 2,000 levels',
    source: () => shape(Array.from({ length: 2000 }, () => '2').join('^')),
    refusal: /is nested 2000 levels deep; the limit is 1000/
  },
  {
    name: 'a symbolic exponent tower',
    source: () => shape('xi^xi^xi^xi^xi'),
    refusal: /exponent of '\^' must be a constant/
  },
  { name: 'a numeric exponent tower', source: () => shape('xi * 9^9^9^9'), refusal: /too large|exponent/ },
  {
    name: 'an exponent of a million',
    source: () => shape('xi^1000000'),
    refusal: /exponent 1000000 is too large/
  },
  {
    name: 'a definition that refers to itself',
    source: () => defs(['a = a + xi'], 'a'),
    refusal: /refers to itself/
  },
  {
    name: 'two definitions that refer to each other',
    source: () => defs(['a = b + xi', 'b = a * 2'], 'a'),
    refusal: /'b' is defined later/
  },
  {
    name: 'a recursive function definition',
    source: () => defs(['h(s) = h(s) + 1'], 'h(xi)'),
    refusal: /calls itself/
  },
  {
    name: 'definitions that double at every step',
    source: () =>
      defs(['a0 = xi + eta', ...Array.from({ length: 40 }, (_, i) => `a${i + 1} = a${i} * a${i}`)], 'a40'),
    refusal: /expands to \d+ terms/
  },
  {
    name: 'functions that square their argument forty times',
    source: () =>
      defs(
        ['f0(s) = s * s', ...Array.from({ length: 40 }, (_, i) => `f${i + 1}(s) = f${i}(f${i}(s))`)],
        'f40(xi)'
      ),
    refusal: /expands to \d+ terms/
  },
  {
    name: 'function definitions that nest calls ever deeper',
    source: () =>
      defs(
        ['f0(s) = s + 1', ...Array.from({ length: 12 }, (_, i) => `f${i + 1}(s) = f${i}(f${i}(s))`)],
        'f12(xi)'
      ),
    refusal: /nests \d+ levels deep|expands to \d+ terms/
  },
  { name: 'a YAML alias bomb', source: aliasBomb, refusal: /aliases \('\*a\d'\) are not allowed/ },
  {
    name: 'a YAML anchor',
    source: () => formulationDoc({ extra: 'material: &m { E: 1, nu: 0.3 }' }),
    refusal: /anchors \('&m'\) are not allowed/
  },
  {
    name: 'a 1 MB document',
    source: () => formulationDoc({ extra: `summary: ${quoted('x'.repeat(1 << 20))}` }),
    refusal: /the document is \d+ bytes; the limit is 65536/
  },
  {
    name: '10,000 nodes',
    source: () => formulationDoc({ nodes: `[${Array.from({ length: 10_000 }, () => '[0,0]').join(',')}]` }),
    refusal: /10000 nodes; a formulation has 64 nodes at most/
  },
  {
    name: "the symbol 'constructor'",
    source: () => shape('constructor'),
    refusal: /unknown symbol 'constructor'/
  },
  {
    name: "the symbol '__proto__'",
    source: () => shape('__proto__ + xi'),
    refusal: /unknown symbol '__proto__'/
  },
  {
    name: 'property access to constructor',
    source: () => shape('xi.constructor'),
    refusal: /property access '\.constructor' is not allowed/
  },
  {
    name: 'a constructor chain call',
    source: () => shape('xi.constructor.constructor("return process")()'),
    refusal: /syntax error|not allowed/
  },
  { name: 'import', source: () => shape('import("fs")'), refusal: /function 'import' is not allowed/ },
  {
    name: 'evaluate',
    source: () => shape('evaluate("1 + 1") + xi'),
    refusal: /function 'evaluate' is not allowed/
  },
  {
    name: 'createUnit',
    source: () => shape('createUnit("furlong") + xi'),
    refusal: /function 'createUnit' is not allowed/
  },
  { name: 'ones', source: () => shape('ones(3) + xi'), refusal: /function 'ones' is not allowed/ },
  { name: 'a string literal', source: () => shape("1 - xi - eta + 'x'"), refusal: /strings are not allowed/ },
  {
    name: 'a matrix in a shape function',
    source: () => shape('[xi, eta]'),
    refusal: /matrix literals are allowed only in B, D and rigid_modes/
  },
  { name: 'an object literal', source: () => shape('{a: 1}'), refusal: /objects '\{…\}' are not allowed/ },
  { name: 'a range', source: () => shape('1:3'), refusal: /ranges 'a:b' are not allowed/ },
  { name: 'a unit', source: () => shape('5 cm'), refusal: /unknown symbol 'cm'/ },
  { name: 'a conditional', source: () => shape('xi > 0 ? 1 : 0'), refusal: /not allowed/ },
  {
    name: 'an assignment in a shape function',
    source: () => shape('xi = 1'),
    refusal: /assignment '=' is allowed only in definitions/
  },
  { name: 'index access', source: () => shape('xi[1]'), refusal: /index access/ },
  {
    name: 'a zero-width space inside a name',
    source: () => shape('1 - x\u200Bi - eta'),
    refusal: /U\+200B, a zero-width space/
  },
  {
    name: 'a bidirectional override character',
    source: () => shape('1 - xi - eta \u202E'),
    refusal: /U\+202E, a bidirectional override control/
  },
  {
    name: 'Cyrillic letters that look like xi',
    source: () => shape('1 - \u0445\u0456 - eta'),
    refusal: /U\+0445/
  },
  { name: 'a NUL character', source: () => shape('1 - xi - eta\u0000'), refusal: /U\+0000, a NUL character/ },
  { name: 'Infinity', source: () => shape('Infinity * xi'), refusal: /not finite/ },
  { name: 'a number that overflows', source: () => shape('1e999 * xi'), refusal: /not finite/ },
  {
    name: 'a YAML tag',
    source: () => formulationDoc({ extra: 'summary: !!binary aGVsbG8=' }),
    refusal: /tags \('!!binary'\) are not allowed/
  },
  {
    name: "a '__proto__' field",
    source: () => formulationDoc({ extra: '__proto__: { polluted: 1 }' }),
    refusal: /unknown field '__proto__'/
  },
  {
    name: 'YAML nested 5,000 deep',
    source: () => formulationDoc({ extra: `summary: ${'['.repeat(5000)}${']'.repeat(5000)}` }),
    refusal: /nesting is too deep/
  },
  {
    name: 'evaluate inside a custom B',
    source: () =>
      formulationDoc({
        strain: `{ dofs: [u, v], components: [exx, eyy, gxy], B: ${quoted('[dNdx, 0; 0, dNdy; dNdy, evaluate("dNdx")]')}, D: "[1, 0, 0; 0, 1, 0; 0, 0, 1]", rigid_modes: ["[1, 0]"] }`
      }),
    refusal: /function 'evaluate' is not allowed/
  }
];
