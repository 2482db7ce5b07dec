// The expression whitelist, the canonical printing and the limits, checked against mathjs itself
// (a general-purpose reference library) and against the numbers the format states.
import fc from 'fast-check';
import { evaluate, parse } from 'mathjs';
import { describe, expect, it } from 'vitest';
import {
  ALLOWED_FUNCTIONS,
  FORMAT_LIMITS,
  checkExpression,
  parseExpressionText,
  parseFormulation,
  policyForField,
  printExpression,
  symbolsForField
} from '@isoledger/formulation';
import { MAX_GAUSS_POINTS, MAX_SIMPLEX_DEGREE } from '@isoledger/kernel';
import { expressionText } from './arbitraries';
import { formulationDoc } from './documents';

const same = (a: number, b: number) =>
  (Number.isNaN(a) && Number.isNaN(b)) ||
  a === b ||
  Math.abs(a - b) <= 1e-12 * Math.max(1, Math.abs(a), Math.abs(b));

describe('canonical printing', () => {
  it('prints an expression that mathjs evaluates to the same value as the original, for random expressions', () => {
    fc.assert(
      fc.property(
        expressionText,
        fc.double({ min: -1, max: 1, noNaN: true }),
        fc.double({ min: -1, max: 1, noNaN: true }),
        (text, xi, eta) => {
          const printed = printExpression(parse(text));
          expect(same(evaluate(printed, { xi, eta }) as number, evaluate(text, { xi, eta }) as number)).toBe(
            true
          );
          // printing is idempotent: the canonical text is its own canonical text
          expect(printExpression(parse(printed))).toBe(printed);
        }
      ),
      { numRuns: 300, seed: 20251201 }
    );
  });

  it('writes multiplication out and drops redundant parentheses', () => {
    expect(printExpression(parse('2xi * ((eta))'))).toBe('2 * xi * eta');
    expect(printExpression(parse('(1 - xi) - (eta)'))).toBe('1 - xi - eta');
    expect(printExpression(parse('1 - (xi - eta)'))).toBe('1 - (xi - eta)');
    expect(printExpression(parse('(-xi)^2'))).toBe('(-xi) ^ 2');
  });
});

describe('the whitelist', () => {
  it('allows exactly the elementary functions of the format', () => {
    expect([...ALLOWED_FUNCTIONS].sort()).toEqual([
      'abs',
      'acos',
      'asin',
      'atan',
      'cos',
      'cosh',
      'exp',
      'log',
      'max',
      'min',
      'pow',
      'sin',
      'sinh',
      'sqrt',
      'tan',
      'tanh'
    ]);
  });

  const refusals: [string, RegExp, number][] = [
    ['evaluate("1")', /function 'evaluate' is not allowed/, 0],
    ['xi + import("fs")', /function 'import' is not allowed/, 5],
    ['xi + createUnit("u")', /function 'createUnit' is not allowed/, 5],
    ['ones(2) + xi', /function 'ones' is not allowed/, 0],
    ['xi + "text"', /strings are not allowed/, 5],
    ['xi.constructor', /property access '\.constructor'/, 2],
    ['xi[1]', /index access/, 2],
    ['{a: xi}', /objects/, 0],
    ['1:3', /ranges/, 1],
    ['xi > 0 ? 1 : 2', /conditional expressions/, 7],
    ['xi == eta', /operator '==' is not allowed/, 3],
    ['xi < eta < 1', /comparisons are not allowed/, 3],
    ['xi (eta)', /function 'xi' is not allowed/, 0],
    ['xi = 1', /assignment '=' is allowed only in definitions/, 3],
    ['xi; eta', /a single statement/, 4],
    ['xi!', /operator '!' is not allowed/, 2],
    ["xi'", /operator ''' is not allowed/, 2],
    ['xi .* eta', /operator '\.\*' is not allowed/, 3],
    ['50%', /'%' is not allowed/, 2],
    ['xi and eta', /operator 'and' is not allowed/, 3],
    ['[xi, eta]', /matrix literals are allowed only in B, D and rigid_modes/, 0],
    ['sin', /'sin' is a function; call it as sin\(…\)/, 0],
    ['sin(xi, eta)', /sin takes 1 argument, got 2/, 0],
    ['true * xi', /'true' is not a number/, 0],
    ['zeta', /unknown symbol 'zeta': a triangle has coordinates xi, eta/, 0]
  ];
  for (const [text, message, index] of refusals)
    it(`refuses ${text} naming the construct at index ${index}`, () => {
      const parsed = parseExpressionText(text);
      expect(parsed.node).not.toBeNull();
      const r = checkExpression(parsed.node!, text, policyForField('triangle', ['xi', 'eta'], 'shape'));
      expect(r.problems.length).toBeGreaterThan(0);
      expect(r.problems[0].message).toMatch(message);
      expect(r.problems[0].index).toBe(index);
    });

  it('allows matrices, products and sums of matching size in D, and infers their shape', () => {
    const text =
      'E / (1 - nu^2) * [1, nu, 0; nu, 1, 0; 0, 0, (1 - nu) / 2] + [[1, 0, 0], [0, 1, 0], [0, 0, 1]] * [1, 0, 0; 0, 1, 0; 0, 0, 1]';
    const r = checkExpression(parse(text), text, policyForField('quadrilateral', ['xi', 'eta'], 'D'));
    expect(r.problems).toEqual([]);
    expect(r.shape).toEqual({ kind: 'matrix', rows: 3, cols: 3, vector: false });
  });

  it('refuses sums of matrices of different size and powers of matrices', () => {
    const policy = policyForField('quadrilateral', ['xi', 'eta'], 'D');
    for (const text of [
      '[1, 0; 0, 1] + [1, 0, 0; 0, 1, 0; 0, 0, 1]',
      '[1, 0; 0, 1] ^ 2',
      '1 + [1, 0; 0, 1]',
      'sqrt([1, 0; 0, 1])'
    ])
      expect(checkExpression(parse(text), text, policy).problems.length, text).toBeGreaterThan(0);
  });

  it('gives B, weight and the displacement fields the per-point symbols of the cell’s dimension', () => {
    expect(symbolsForField('triangle', ['xi', 'eta'], 'B')).toEqual([
      'N',
      'dNdx',
      'dNdy',
      'dNdxi',
      'dNdeta',
      'x',
      'y',
      'xi',
      'eta',
      'detJ',
      'thickness',
      'area',
      'E',
      'nu',
      'pi'
    ]);
    expect(symbolsForField('hexahedron', undefined, 'rigid_modes')).toContain('dNdz');
    expect(symbolsForField('interval', undefined, 'weight')).not.toContain('y');
    expect(symbolsForField('tetrahedron', ['r', 's', 't'], 'shape')).toEqual(['r', 's', 't', 'pi']);
    expect(symbolsForField('quadrilateral', undefined, 'D')).toEqual(['E', 'nu', 'thickness', 'pi']);
    expect(symbolsForField('quadrilateral', undefined, 'nodes')).toEqual(['pi']);
  });
});

describe('limits', () => {
  it('are the figures of formulation-format.md', () => {
    expect(FORMAT_LIMITS.documentBytes).toBe(64 * 1024);
    expect(FORMAT_LIMITS.nodes).toBe(64);
    expect(FORMAT_LIMITS.expressionBytes).toBe(4 * 1024);
    expect(FORMAT_LIMITS.nesting).toBe(64);
    expect(FORMAT_LIMITS.quadraturePoints).toBe(1000);
    expect(FORMAT_LIMITS.gaussPoints).toEqual({ min: 1, max: 10 });
  });

  it('accept exactly the simplex degrees and Gauss counts the kernel tabulates', () => {
    expect(FORMAT_LIMITS.simplexDegree).toEqual(MAX_SIMPLEX_DEGREE);
    expect(FORMAT_LIMITS.gaussPoints.max).toBeLessThanOrEqual(MAX_GAUSS_POINTS);
  });

  it('refuses an expression one byte over 4 KB and accepts one at the limit', () => {
    // a long literal: the byte limit alone, without the depth limit of long sums
    const at = 'xi + 0.' + '1'.repeat(4096 - 7);
    expect(new TextEncoder().encode(at).length).toBe(4096);
    expect(parseExpressionText(at).problems).toEqual([]);
    expect(parseExpressionText(at + ' ').problems[0].message).toBe(
      'expression is 4097 bytes; the limit is 4096'
    );
  });

  it('refuses a sum of more than 1000 terms, which is as deep in the tree (mathjs differentiation overflows near 1500)', () => {
    expect(parseExpressionText(Array.from({ length: 1000 }, () => 'xi').join('+')).problems).toEqual([]);
    expect(parseExpressionText(Array.from({ length: 1002 }, () => 'xi').join('+')).problems[0].message).toBe(
      'expression is nested 1002 levels deep; the limit is 1000'
    );
  });

  it('refuses nesting of 65 brackets and accepts 64', () => {
    expect(parseExpressionText('('.repeat(64) + 'xi' + ')'.repeat(64)).problems).toEqual([]);
    expect(parseExpressionText('('.repeat(65) + 'xi' + ')'.repeat(65)).problems[0]).toEqual({
      index: 64,
      message: 'expression nesting exceeds 64 levels of brackets'
    });
  });

  it('refuses 65 nodes and a rule of more than 1000 points', () => {
    const nodes = `[${Array.from({ length: 65 }, () => '[0, 0]').join(', ')}]`;
    expect(parseFormulation(formulationDoc({ nodes })).diagnostics.map((d) => d.message)).toContain(
      '65 nodes; a formulation has 64 nodes at most'
    );
    const points = `[${Array.from({ length: 1001 }, () => '[0.2, 0.2, 0.0005]').join(', ')}]`;
    expect(
      parseFormulation(
        formulationDoc({ quadrature: `{ rule: explicit, points: ${points} }` })
      ).diagnostics.map((d) => d.message)
    ).toContain('1001 quadrature points; the limit is 1000');
  });
});

describe('definitions', () => {
  it('are inlined into the shape functions and re-printed as written', () => {
    const r = parseFormulation(
      formulationDoc({
        definitions: ['L1 = 1 - xi - eta', 'twice(s) = 2*s'],
        shape: ['twice(L1) / 2', 'xi', 'eta']
      })
    );
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.definition.definitions).toEqual(['L1 = 1 - xi - eta', 'twice(s) = 2 * s']);
    expect(r.definition.shape[0]).toBe('2 * (1 - xi - eta) / 2');
    expect(r.definition.derivatives[0].map((d) => evaluate(d, { xi: 0.2, eta: 0.3 }))).toEqual([-1, -1]);
  });

  it('refuse names reserved by the format, parameters named like coordinates and redefinitions', () => {
    const messages = (definitions: string[]) => {
      const r = parseFormulation(formulationDoc({ definitions }));
      return r.ok ? [] : r.diagnostics.map((d) => d.message);
    };
    expect(messages(['pi = 3'])).toContain("'pi' is reserved by the format and cannot name a definition");
    expect(messages(['sin(s) = s'])).toContain(
      "'sin' is reserved by the format and cannot name a definition"
    );
    expect(messages(['h(xi) = xi'])).toContain(
      "parameter 'xi' has the name of a coordinate; choose another name (such as s)"
    );
    expect(messages(['a = xi', 'a = eta'])).toContain("'a' is defined twice (first in definitions[0])");
    expect(messages(['xi = 2'])).toContain("'xi' is a coordinate of this cell and cannot be redefined");
  });
});
