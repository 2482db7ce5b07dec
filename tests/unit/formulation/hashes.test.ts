// sourceHash, definitionHash and the canonical JSON: layout and comments never change the
// definitionHash; any change of what the element computes does.
import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import {
  canonicalJson,
  definitionHash,
  parseFormulation,
  sourceHash,
  type Definition
} from '@isoledger/formulation';

const BASE = `format: 1
name: quad4-hash
title: Four-node quadrilateral for hash tests
cell: quadrilateral
nodes: [[-1, -1], [1, -1], [1, 1], [-1, 1]]
definitions:
  - "lo(s) = (1 - s) / 2"
  - "hi(s) = (1 + s) / 2"
shape:
  - lo(xi) * lo(eta)
  - hi(xi) * lo(eta)
  - hi(xi) * hi(eta)
  - lo(xi) * hi(eta)
strain: plane-stress
quadrature: { rule: gauss, points: 2 }
`;

function parsed(source: string) {
  const r = parseFormulation(source);
  if (!r.ok) throw new Error(JSON.stringify(r.diagnostics));
  return r;
}
const hashOf = (source: string) => parsed(source).definitionHash;

describe('definitionHash is stable under layout, comments and spelling', () => {
  const base = hashOf(BASE);
  const same: [string, string][] = [
    [
      'comments everywhere',
      BASE.replace('cell: quadrilateral', '# the reference square\ncell: quadrilateral # a comment').replace(
        'shape:',
        'shape: # one per node'
      )
    ],
    [
      'block instead of flow sequences',
      BASE.replace(
        'nodes: [[-1, -1], [1, -1], [1, 1], [-1, 1]]',
        'nodes:\n  - [-1, -1]\n  - [1, -1]\n  - [1, 1]\n  - [-1, 1]'
      )
    ],
    [
      'flow instead of block mappings',
      BASE.replace('quadrature: { rule: gauss, points: 2 }', 'quadrature:\n  rule: gauss\n  points: 2')
    ],
    [
      'quoted instead of plain scalars',
      BASE.replace('  - lo(xi) * lo(eta)', "  - 'lo(xi) * lo(eta)'").replace(
        'strain: plane-stress',
        'strain: "plane-stress"'
      )
    ],
    ['white space inside expressions', BASE.replace('  - hi(xi) * lo(eta)', '  - hi( xi )*lo(eta)   ')],
    ['redundant parentheses', BASE.replace('  - hi(xi) * hi(eta)', '  - ((hi(xi)) * (hi(eta)))')],
    [
      'implicit multiplication',
      BASE.replace('  - "lo(s) = (1 - s) / 2"', '  - "lo(s) = (1 - s) / 2"').replace(
        '  - lo(xi) * hi(eta)',
        '  - lo(xi) hi(eta)'
      )
    ],
    ['CRLF line endings', BASE.replace(/\n/g, '\r\n')],
    [
      'fields in another order',
      BASE.replace('strain: plane-stress\n', '').replace('format: 1\n', 'format: 1\nstrain: plane-stress\n')
    ],
    ['the default material and thickness written out', BASE + 'material: { E: 1, nu: 0.3 }\nthickness: 1\n'],
    [
      'another title and summary',
      BASE.replace(
        'title: Four-node quadrilateral for hash tests',
        'title: Another title\nsummary: A note for reviewers.'
      )
    ],
    ['helpers renamed', BASE.replace(/\blo\(/g, 'lower(').replace(/\bhi\(/g, 'upper(')],
    [
      'helpers written out',
      BASE.replace(/definitions:\n.*\n.*\n/, '')
        .replace(/lo\((\w+)\)/g, '((1 - $1) / 2)')
        .replace(/hi\((\w+)\)/g, '((1 + $1) / 2)')
    ],
    ['1/2 and 0.5 alike in node coordinates', BASE.replace('[1, 1]', '[2/2, 0.5 + 1/2]')]
  ];
  for (const [what, source] of same)
    it(`keeps the hash with ${what}`, () => {
      expect(hashOf(source)).toBe(base);
    });
});

describe('definitionHash changes with any change of meaning', () => {
  const base = hashOf(BASE);
  const different: [string, string][] = [
    ['a node coordinate', BASE.replace('[1, 1]', '[1, 0.9]')],
    ['a coefficient of a helper', BASE.replace('(1 + s) / 2', '(1 + s) / 2.0001')],
    [
      'the order of two shape functions',
      BASE.replace(
        '  - hi(xi) * lo(eta)\n  - hi(xi) * hi(eta)',
        '  - hi(xi) * hi(eta)\n  - hi(xi) * lo(eta)'
      ).replace('[1, -1], [1, 1]', '[1, 1], [1, -1]')
    ],
    ['the strain kind', BASE.replace('plane-stress', 'plane-strain')],
    ['the quadrature', BASE.replace('points: 2', 'points: 3')],
    ['Young’s modulus', BASE + 'material: { E: 2, nu: 0.3 }\n'],
    ["Poisson's ratio", BASE + 'material: { E: 1, nu: 0.25 }\n'],
    ['the thickness', BASE + 'thickness: 0.5\n'],
    [
      'the names of the coordinates',
      BASE.replace('cell: quadrilateral', 'cell: quadrilateral\ncoordinates: [r, s]')
        .replace(/\(xi\)/g, '(r)')
        .replace(/\(eta\)/g, '(s)')
        .replace(/\(s\) =/g, '(t) =')
        .replace(/- s\)/g, '- t)')
        .replace(/\+ s\)/g, '+ t)')
    ]
  ];
  for (const [what, source] of different)
    it(`changes the hash with ${what}`, () => {
      expect(hashOf(source)).not.toBe(base);
    });

  it('covers the meaning only: derivatives (derived) and helper definitions are not hashed', () => {
    const r = parsed(BASE);
    const tampered: Definition = {
      ...r.definition,
      derivatives: r.definition.derivatives.map((row) => row.map(() => '0')),
      definitions: []
    };
    expect(definitionHash(tampered)).toBe(r.definitionHash);
    expect(definitionHash({ ...r.definition, shape: [...r.definition.shape].reverse() })).not.toBe(
      r.definitionHash
    );
  });
});

describe('sourceHash', () => {
  it('is the SHA-256 of the UTF-8 source: "abc" gives the published digest (FIPS 180-2, appendix B.1)', () => {
    expect(sourceHash('abc')).toBe('sha256:ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });
  it('normalises CRLF and CR line endings to LF', () => {
    expect(sourceHash('a: 1\r\nb: 2\r')).toBe(sourceHash('a: 1\nb: 2\n'));
    expect(parsed(BASE.replace(/\n/g, '\r\n')).sourceHash).toBe(parsed(BASE).sourceHash);
  });
  it('changes with a comment, where definitionHash does not', () => {
    const a = parsed(BASE);
    const b = parsed(BASE + '# reviewed\n');
    expect(b.sourceHash).not.toBe(a.sourceHash);
    expect(b.definitionHash).toBe(a.definitionHash);
  });
  it('hashes non-ASCII text as UTF-8 (compared with node:crypto over the UTF-8 bytes)', () => {
    const text = 'title: Träger – 梁\n';
    expect(sourceHash(text)).toBe(
      'sha256:' + createHash('sha256').update(Buffer.from(text, 'utf8')).digest('hex')
    );
  });
});

describe('canonicalJson', () => {
  it('sorts keys at every level and drops undefined values', () => {
    expect(canonicalJson({ b: 1, a: { d: [3, { z: 1, y: 2 }], c: undefined } })).toBe(
      '{"a":{"d":[3,{"y":2,"z":1}]},"b":1}'
    );
  });
  it('prints numbers as ECMAScript does (RFC 8785 §3.2.2 number examples, from memory)', () => {
    expect(
      canonicalJson(JSON.parse('[333333333.33333329, 1E30, 4.50, 2e-3, 0.000000000000000000000000001]'))
    ).toBe('[333333333.3333333,1e+30,4.5,0.002,1e-27]');
  });
  it('refuses values that JSON cannot carry', () => {
    expect(() => canonicalJson(Number.NaN)).toThrow();
    expect(() => canonicalJson({ f: () => 1 })).toThrow();
  });
  it('is the text the definitionHash is taken of', () => {
    const r = parsed(BASE);
    const { name: _n, title: _t, summary: _s, definitions: _d, derivatives: _v, ...meaning } = r.definition;
    expect(r.definitionHash).toBe(
      'sha256:' + createHash('sha256').update(canonicalJson(meaning)).digest('hex')
    );
  });
});
