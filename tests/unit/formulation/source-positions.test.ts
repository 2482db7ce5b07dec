// Positions inside expressions in every YAML scalar style: a fault is reported at the line and
// column where its text stands in the document, whatever quoting, escaping or folding the author
// used. The yaml package's own reading of each scalar is the reference for the traced text.
import fc from 'fast-check';
import { parseDocument, type Scalar } from 'yaml';
import { describe, expect, it } from 'vitest';
import { parseFormulation } from '@isoledger/formulation';
import { scalarMap } from '../../../packages/formulation/src/source-map';

/** Where `needle` stands in `source`, 1-based. */
function positionOf(source: string, needle: string): { line: number; column: number } {
  const offset = source.indexOf(needle);
  const before = source.slice(0, offset);
  const line = before.split('\n').length;
  return { line, column: offset - before.lastIndexOf('\n') };
}

/** Terms of an expression; the unknown symbol `qq` is one of them. */
const terms = fc
  .tuple(
    fc.array(fc.constantFrom('xi', 'eta', '2', '(1 - xi)', 'sqrt(eta + 1)', '0.5'), {
      minLength: 1,
      maxLength: 8
    }),
    fc.nat()
  )
  .map(([ts, k]) => {
    const at = k % (ts.length + 1);
    return [...ts.slice(0, at), 'qq', ...ts.slice(at)];
  });

type Style =
  'plain' | 'plain-folded' | 'double' | 'double-escaped' | 'double-folded' | 'single' | 'literal' | 'folded';
const STYLES: Style[] = [
  'plain',
  'plain-folded',
  'double',
  'double-escaped',
  'double-folded',
  'single',
  'literal',
  'folded'
];

/** The scalar for `- …` in a block sequence at indent 2, in the given style. */
function writeScalar(ts: string[], style: Style): string {
  const flat = ts.join(' + ');
  switch (style) {
    case 'plain':
      return flat;
    case 'plain-folded':
      return ts.join('\n    + ');
    case 'double':
      return JSON.stringify(flat);
    case 'double-escaped':
      // spell every 'x' of xi as \x78 and every space before a term as \u0020
      return '"' + flat.replace(/x/g, '\\x78').replace(/ \+ /g, '\\u0020+ ') + '"';
    case 'double-folded':
      return '"' + ts.join(' +\n    ') + '"';
    case 'single':
      return "'" + flat + "'";
    case 'literal':
      return '|\n    (' + ts.join(' +\n      ') + ')';
    case 'folded':
      return '>-\n    ' + ts.join(' +\n    ');
  }
}

const doc = (scalar: string) => `format: 1
name: tri3-positions
title: Positions
cell: triangle
nodes: [[0, 0], [1, 0], [0, 1]]
shape:
  - 1 - xi - eta
  - ${scalar}
  - eta
strain: plane-stress
quadrature: { rule: simplex, degree: 1 }
`;

describe('expression faults are reported where they stand in the document', () => {
  it('names the line and column of an unknown symbol in every scalar style, for random expressions', () => {
    fc.assert(
      fc.property(terms, fc.constantFrom(...STYLES), (ts, style) => {
        const source = doc(writeScalar(ts, style));
        const result = parseFormulation(source);
        expect(result.ok).toBe(false);
        const d = result.diagnostics.find((x) => x.message.startsWith("unknown symbol 'qq'"));
        expect(d, `${style}\n${source}\n${JSON.stringify(result.diagnostics)}`).toBeDefined();
        expect({ line: d!.line, column: d!.column }).toEqual(positionOf(source, 'qq'));
        expect(d!.path).toBe('shape[1]');
      }),
      { numRuns: 400, seed: 4242 }
    );
  });

  it('traces every character of random scalars back to the source, agreeing with the yaml package’s value', () => {
    const text = fc.string({
      unit: fc.constantFrom('a', 'b', ' ', '+', "'", '"', '\\', '(', ')', 'é'),
      maxLength: 30
    });
    fc.assert(
      fc.property(
        fc.array(text, { minLength: 1, maxLength: 4 }),
        fc.constantFrom('double', 'single', 'literal', 'folded'),
        (lines, style) => {
          let scalar: string;
          if (style === 'double') scalar = JSON.stringify(lines.join(' '));
          else if (style === 'single') scalar = "'" + lines.join(' ').replace(/'/g, "''") + "'";
          else
            scalar =
              (style === 'literal' ? '|' : '>') +
              '\n' +
              lines.map((l) => '    ' + l.replace(/^\s+/, 'x')).join('\n');
          const source = `key:\n  - ${scalar}\n`;
          const parsedDoc = parseDocument(source, { keepSourceTokens: true });
          fc.pre(parsedDoc.errors.length === 0);
          const node = (parsedDoc.get('key', true) as { items: Scalar[] }).items[0];
          const map = scalarMap(source, node);
          expect(map.offsets, `${style}: ${JSON.stringify(source)}`).not.toBeNull();
          // each traced offset holds the character it stands for, or the start of its escape or fold
          const value = String(node.value);
          map.offsets!.forEach((o, k) => {
            const ch = value[k];
            if (ch === undefined) return;
            const src = source[o];
            const plausible =
              src === ch ||
              src === '\\' ||
              src === '\n' ||
              (ch === "'" && src === "'") ||
              (ch === ' ' && /\s/.test(src)) ||
              (ch === '\n' && /\s/.test(src));
            expect(
              plausible,
              `${style} value[${k}] = ${JSON.stringify(ch)} at source ${o} = ${JSON.stringify(src)}`
            ).toBe(true);
          });
        }
      ),
      { numRuns: 300, seed: 77 }
    );
  });

  it('counts columns in UTF-16 code units, as editors do, after non-ASCII text on the line', () => {
    const source = doc('"(1 - xi) * 1 + qq"').replace('title: Positions', 'title: Träger 梁 – positions');
    const result = parseFormulation(source);
    expect(result.ok).toBe(false);
    expect(result.diagnostics[0]).toMatchObject(positionOf(source, 'qq'));
    // '𝔁' (U+1D501) is two UTF-16 code units: qq stands in column 15 (14 counted in code points)
    const withWide = `format: 1\nname: tri3-wide\ntitle: wide\ncell: triangle\nnodes: [[0, 0], [1, 0], [0, 1]]\nshape: ["𝔁", qq, eta]\nstrain: plane-stress\nquadrature: { rule: simplex, degree: 1 }\n`;
    const r2 = parseFormulation(withWide);
    expect(r2.ok).toBe(false);
    expect(r2.diagnostics.find((d) => d.path === 'shape[1]')).toMatchObject({
      line: 6,
      column: 15,
      message: "unknown symbol 'qq': a triangle has coordinates xi, eta"
    });
    expect(r2.diagnostics.find((d) => d.path === 'shape[0]')).toMatchObject({ line: 6, column: 10 });
  });
});
