// Invalid documents, each with the exact line and column where the problem was written. The
// positions are counted by hand from the document text (1-based line and column); the messages
// must say what is wrong and what is allowed.
import { describe, expect, it } from 'vitest';
import { parseFormulation, type Diagnostic } from '@isoledger/formulation';
import { formulationDoc } from './documents';

interface Case {
  name: string;
  source: string;
  line: number;
  column: number;
  path: string;
  message: RegExp;
}

// formulationDoc() layout without definitions: 1 format, 2 name, 3 title, 4 cell, 5 nodes, 6 'shape:',
// 7–9 the three shape functions written `  - "…"` (the expression starts in column 6), 10 strain,
// 11 quadrature, 12 the extra line.
const QUAD = {
  cell: 'quadrilateral',
  nodes: '[[-1, -1], [1, -1], [1, 1], [-1, 1]]',
  shape: [
    '(1 - xi) * (1 - eta) / 4',
    '(1 + xi) * (1 - eta) / 4',
    '(1 + xi) * (1 + eta) / 4',
    '(1 - xi) * (1 + eta) / 4'
  ]
};

const CASES: Case[] = [
  {
    name: 'an unknown field',
    source: formulationDoc({ extra: 'colour: red' }),
    line: 12,
    column: 1,
    path: 'colour',
    message:
      /^unknown field 'colour': the allowed fields are format, name, title, summary, cell, coordinates, nodes, definitions, shape, strain, quadrature, material, thickness, area$/
  },
  {
    name: 'fewer shape functions than nodes',
    source: formulationDoc({ shape: ['1 - xi - eta', 'xi'] }),
    line: 7,
    column: 3,
    path: 'shape',
    message: /^shape has 2 functions but nodes has 3: one shape function per node$/
  },
  {
    name: 'a node outside the reference triangle',
    source: formulationDoc({ nodes: '[[0, 0], [1, 0], [0, 2]]' }),
    line: 5,
    column: 25,
    path: 'nodes[2]',
    message: /^node 3 \(0, 2\) lies outside the reference triangle: xi ≥ 0, eta ≥ 0, xi \+ eta ≤ 1$/
  },
  {
    name: 'an unknown symbol in a double-quoted expression',
    source: formulationDoc({ shape: ['1 - xi - zeta', 'xi', 'eta'] }),
    line: 7,
    column: 15,
    path: 'shape[0]',
    message: /^unknown symbol 'zeta': a triangle has coordinates xi, eta$/
  },
  {
    name: 'an unsupported function',
    source: formulationDoc({ shape: ['1 - xi - eta', 'gamma(xi)', 'eta'] }),
    line: 8,
    column: 6,
    path: 'shape[1]',
    message:
      /^function 'gamma' is not allowed; the allowed functions are sqrt, abs, exp, log, sin, cos, tan, asin, acos, atan, sinh, cosh, tanh, min, max, pow$/
  },
  {
    name: 'a syntax error at the end of an expression',
    source: formulationDoc({ shape: ['1 - xi - eta', 'xi', 'eta +'] }),
    line: 9,
    column: 11,
    path: 'shape[2]',
    message: /^syntax error: Unexpected end of expression$/
  },
  {
    name: 'an unknown strain kind',
    source: formulationDoc({ strain: 'plain-stress' }),
    line: 10,
    column: 9,
    path: 'strain',
    message:
      /^unknown strain kind 'plain-stress': the built-in kinds are bar, plane-stress, plane-strain, axisymmetric, solid/
  },
  {
    name: 'a strain kind of the wrong dimension',
    source: formulationDoc({ strain: 'solid' }),
    line: 10,
    column: 9,
    path: 'strain',
    message:
      /^solid needs a 3-dimensional cell \(tetrahedron or hexahedron\); this formulation's cell is a triangle$/
  },
  {
    name: 'a quadrature rule that does not fit the cell',
    source: formulationDoc({ quadrature: '{ rule: gauss, points: 2 }' }),
    line: 11,
    column: 21,
    path: 'quadrature.rule',
    message:
      /^the gauss rule does not fit a triangle: use \{ rule: simplex, degree: p \} or an explicit rule$/
  },
  {
    name: 'an unknown cell',
    source: formulationDoc({ cell: 'square' }),
    line: 4,
    column: 7,
    path: 'cell',
    message:
      /^unknown cell 'square': the reference cells are interval, triangle, quadrilateral, tetrahedron, hexahedron$/
  },
  {
    name: 'a missing required field',
    source: formulationDoc().replace('quadrature: { rule: simplex, degree: 1 }\n', ''),
    line: 1,
    column: 1,
    path: 'quadrature',
    message: /^missing required field 'quadrature'$/
  },
  {
    name: 'a name that is not a slug',
    source: formulationDoc({ name: 'Tri 3' }),
    line: 2,
    column: 7,
    path: 'name',
    message: /^name must be a slug of 3–64 characters/
  },
  {
    name: 'a node with three coordinates in a triangle',
    source: formulationDoc({ nodes: '[[0, 0], [1, 0, 0], [0, 1]]' }),
    line: 5,
    column: 17,
    path: 'nodes[1]',
    message: /^node 2 has 3 coordinates; a triangle needs 2 \(xi, eta\)$/
  },
  {
    name: "a Poisson's ratio of one half",
    source: formulationDoc({ extra: 'material: { E: 1, nu: 0.5 }' }),
    line: 12,
    column: 23,
    path: 'material.nu',
    message: /^material\.nu must lie in \(-1, 0\.5\) for an isotropic elastic material, not 0\.5$/
  },
  {
    name: 'eleven Gauss points per direction',
    source: formulationDoc({ ...QUAD, quadrature: '{ rule: gauss, points: 11 }' }),
    // QUAD has four shape functions: strain on line 11, quadrature on line 12
    line: 12,
    column: 36,
    path: 'quadrature.points',
    message: /^gauss points per direction must be a whole number from 1 to 10, not 11$/
  },
  {
    name: 'a field written twice',
    source: formulationDoc({ extra: 'cell: triangle' }),
    line: 12,
    column: 1,
    path: '',
    message: /^YAML: a field appears twice in the same mapping$/
  },
  {
    name: 'an escape sequence before the fault in a double-quoted scalar',
    // the source spells the digit 1 as \u0031 (six characters): zeta starts in column 20
    source: formulationDoc().replace('  - "1 - xi - eta"', '  - "\\u0031 - xi - zeta"'),
    line: 7,
    column: 20,
    path: 'shape[0]',
    message: /^unknown symbol 'zeta'/
  },
  {
    name: 'a doubled quote in a single-quoted scalar',
    source: formulationDoc().replace('  - "1 - xi - eta"', "  - '1 - xi + ''a'' - eta'"),
    line: 7,
    column: 15,
    path: 'shape[0]',
    message: /^strings are not allowed in expressions$/
  },
  {
    name: 'a fault on the second line of a literal block scalar',
    // inside parentheses mathjs reads the line break as white space
    source: formulationDoc().replace('  - "eta"', '  - |\n    (eta *\n      zeta)'),
    line: 11,
    column: 7,
    path: 'shape[2]',
    message: /^unknown symbol 'zeta'/
  },
  {
    name: 'a fault on the second line of a folded block scalar',
    source: formulationDoc().replace('  - "1 - xi - eta"', '  - >-\n    1 - xi\n    - eta - zeta'),
    line: 9,
    column: 13,
    path: 'shape[0]',
    message: /^unknown symbol 'zeta'/
  },
  {
    name: 'a fault on the continuation line of a plain scalar',
    source: formulationDoc().replace('  - "1 - xi - eta"', '  - 1 - xi\n    - zeta'),
    line: 8,
    column: 7,
    path: 'shape[0]',
    message: /^unknown symbol 'zeta'/
  },
  {
    name: 'a custom B block of the wrong size',
    source: formulationDoc({
      strain:
        '{ dofs: [u, v], components: [exx, eyy, gxy], B: "[dNdx, 0; 0, dNdy]", D: "[1, 0, 0; 0, 1, 0; 0, 0, 1]", rigid_modes: ["[1, 0]"] }'
    }),
    line: 10,
    column: 57,
    path: 'strain.B',
    message: /^B is the block of one node: a 3 × 2 matrix \(components × dofs\), not a 2 × 2 matrix$/
  },
  {
    name: 'a forward reference among definitions',
    // with definitions: 6 'definitions:', 7 and 8 the two definitions written `  - "…"`
    source: formulationDoc({ definitions: ['a = b * 2', 'b = xi'], shape: ['1 - xi - eta', 'a / 2', 'eta'] }),
    line: 7,
    column: 10,
    path: 'definitions[0]',
    message:
      /^'b' is defined later \(definitions\[1\]\); a definition may use only the definitions before it$/
  },
  {
    name: 'one coordinate name for a triangle',
    source: formulationDoc({ extra: 'coordinates: [r]' }),
    line: 12,
    column: 14,
    path: 'coordinates',
    message: /^a triangle has 2 natural coordinates; coordinates lists 1$/
  },
  {
    name: 'an explicit quadrature point outside the cell',
    source: formulationDoc({ quadrature: '{ rule: explicit, points: [[0.5, 0.6, 0.5]] }' }),
    line: 11,
    column: 40,
    path: 'quadrature.points[0]',
    message: /^quadrature point 1 lies outside the reference triangle/
  },
  {
    name: 'the format version written as text',
    source: formulationDoc().replace('format: 1', 'format: "1"'),
    line: 1,
    column: 9,
    path: 'format',
    message: /^format must be a number, not the text '1'$/
  },
  {
    name: 'a named operator',
    source: formulationDoc({ shape: ['1 - xi - eta', 'xi mod 2', 'eta'] }),
    line: 8,
    column: 9,
    path: 'shape[1]',
    message: /^operator 'mod' is not allowed; expressions may use \+ - \* \/ \^ and unary minus$/
  },
  {
    name: 'thickness on an axisymmetric element',
    source: formulationDoc({
      ...QUAD,
      strain: 'axisymmetric',
      quadrature: '{ rule: gauss, points: 2 }',
      extra: 'thickness: 0.1'
    }),
    line: 13,
    column: 12,
    path: 'thickness',
    message:
      /^thickness applies to the plane kinds \(plane-stress, plane-strain\) and custom blocks, not to axisymmetric \(it integrates with the weight 2πr\)$/
  }
];

const errors = (d: Diagnostic[]) => d.filter((x) => x.severity === 'error');

describe('invalid documents are refused at the line and column where the fault was written', () => {
  it('has at least twenty cases', () => {
    expect(CASES.length).toBeGreaterThanOrEqual(20);
  });
  for (const c of CASES) {
    it(`${c.name} → ${c.line}:${c.column} (${c.path || 'document'})`, () => {
      const result = parseFormulation(c.source);
      expect(result.ok).toBe(false);
      const found = errors(result.diagnostics).find((d) => c.message.test(d.message));
      expect(found, JSON.stringify(result.diagnostics, null, 1)).toBeDefined();
      expect({ line: found!.line, column: found!.column, path: found!.path }).toEqual({
        line: c.line,
        column: c.column,
        path: c.path
      });
    });
  }
});

describe('every problem of a document is reported at once', () => {
  it('lists the faults of five fields in source order, each at its own place', () => {
    const source = formulationDoc({
      name: 'Bad Name',
      nodes: '[[0, 0], [1, 0], [0, 2]]',
      shape: ['1 - xi - zeta', 'xi', 'eta'],
      strain: 'plain-stress',
      extra: 'colour: red'
    });
    const result = parseFormulation(source);
    expect(result.ok).toBe(false);
    expect(errors(result.diagnostics).map((d) => `${d.line}:${d.column} ${d.path}`)).toEqual([
      '2:7 name',
      '5:25 nodes[2]',
      '7:15 shape[0]',
      '10:9 strain',
      '12:1 colour'
    ]);
  });

  it('reports two unknown symbols of one expression at their own columns', () => {
    const result = parseFormulation(formulationDoc({ shape: ['zeta - xi - zeta', 'xi', 'eta'] }));
    expect(result.ok).toBe(false);
    expect(errors(result.diagnostics).map((d) => d.column)).toEqual([6, 18]);
  });

  it('keeps checking the known fields of a mapping that has an unknown one', () => {
    const result = parseFormulation(formulationDoc({ extra: 'material: { E: -1, nu: 0.3, G: 3 }' }));
    expect(
      errors(result.diagnostics)
        .map((d) => d.path)
        .sort()
    ).toEqual(['material.E', 'material.G']);
  });

  it('stops at YAML syntax errors and says where they are', () => {
    const result = parseFormulation('format: 1\nname: [a, b\n');
    expect(result.ok).toBe(false);
    expect(result.diagnostics[0].message).toMatch(/^YAML: /);
    expect(result.diagnostics[0].line).toBeGreaterThanOrEqual(2);
  });

  it('refuses input that is not text, and an empty document, without throwing', () => {
    expect(parseFormulation(42 as unknown as string).ok).toBe(false);
    const empty = parseFormulation('# only a comment\n');
    expect(empty.ok).toBe(false);
    expect(empty.diagnostics[0].message).toMatch(/^the document is empty/);
  });
});
