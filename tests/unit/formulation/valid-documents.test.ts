// Valid documents and the parsed definition they give: the format's own examples, defaults made
// explicit, constants evaluated, warnings that do not refuse the document.
import { describe, expect, it } from 'vitest';
import { parseFormulation, type CustomStrain } from '@isoledger/formulation';
import { formulationDoc } from './documents';

const parsed = (source: string) => {
  const r = parseFormulation(source);
  if (!r.ok) throw new Error(JSON.stringify(r.diagnostics, null, 1));
  return r;
};

describe('the examples of formulation-format.md', () => {
  it('parses the three-node triangle example into the definition the format describes', () => {
    const r = parsed(`format: 1
name: tri3-membrane
title: Three-node linear triangle, plane stress
cell: triangle
nodes: [[0, 0], [1, 0], [0, 1]]
shape:
  - 1 - xi - eta
  - xi
  - eta
strain: plane-stress
quadrature: { rule: simplex, degree: 1 }
material: { E: 200e9, nu: 0.3 }
thickness: 0.01
`);
    expect(r.diagnostics).toEqual([]);
    expect(r.definition).toEqual({
      format: 1,
      name: 'tri3-membrane',
      title: 'Three-node linear triangle, plane stress',
      cell: 'triangle',
      coordinates: ['xi', 'eta'],
      nodes: [
        [0, 0],
        [1, 0],
        [0, 1]
      ],
      definitions: [],
      shape: ['1 - xi - eta', 'xi', 'eta'],
      derivatives: [
        ['-1', '-1'],
        ['1', '0'],
        ['0', '1']
      ],
      strain: 'plane-stress',
      quadrature: { rule: 'simplex', degree: 1 },
      material: { E: 200e9, nu: 0.3 },
      thickness: 0.01
    });
    expect(r.sourceHash).toMatch(/^sha256:[0-9a-f]{64}$/);
    expect(r.definitionHash).toMatch(/^sha256:[0-9a-f]{64}$/);
  });

  it('parses the custom strain block example on a four-node quadrilateral', () => {
    const r = parsed(`format: 1
name: quad4-custom-example
title: The custom block of the format, on a bilinear quadrilateral
cell: quadrilateral
nodes: [[-1, -1], [1, -1], [1, 1], [-1, 1]]
shape:
  - (1 - xi) * (1 - eta) / 4
  - (1 + xi) * (1 - eta) / 4
  - (1 + xi) * (1 + eta) / 4
  - (1 - xi) * (1 + eta) / 4
strain:
  dofs: [u, v]                      # names of the dofs at each node
  components: [exx, eyy, gxy]       # names of the strain components (rows of B)
  B: "[dNdx, 0; 0, dNdy; dNdy, dNdx]"   # the block for ONE node: rows = components, columns = dofs
  D: "E / (1 - nu^2) * [1, nu, 0; nu, 1, 0; 0, 0, (1 - nu) / 2]"
  weight: "thickness * detJ"        # integrand weight at a point
  rigid_modes:
    - "[1, 0]"
    - "[0, 1]"
    - "[-y, x]"
  patch:
    displacement: ["1e-3 * (x + y / 2)", "1e-3 * (y + x / 2)"]
  convergence:
    displacement: ["sin(pi * x) * sin(pi * y)", "0"]
    body_force:
      - "(E / (1 - nu^2) + E / (2 * (1 + nu))) * pi^2 * sin(pi * x) * sin(pi * y)"
      - "-(E / (2 * (1 + nu)) + E * nu / (1 - nu^2)) * pi^2 * cos(pi * x) * cos(pi * y)"
quadrature: { rule: gauss, points: 2 }
thickness: 0.5
`);
    const s = r.definition.strain as CustomStrain;
    expect(s.B).toBe('[[dNdx, 0], [0, dNdy], [dNdy, dNdx]]');
    expect(s.weight).toBe('thickness * detJ');
    expect(s.patch!.displacement).toEqual(['0.001 * (x + y / 2)', '0.001 * (y + x / 2)']);
    expect(s.convergence!.displacement).toEqual(['sin(pi * x) * sin(pi * y)', '0']);
    expect(r.definition.thickness).toBe(0.5);
  });
});

describe('defaults and constants', () => {
  it('makes the default material and the plane thickness explicit', () => {
    const d = parsed(formulationDoc()).definition;
    expect(d.material).toEqual({ E: 1, nu: 0.3 });
    expect(d.thickness).toBe(1);
    expect(d.area).toBeUndefined();
  });

  it('gives a bar the default area and no thickness', () => {
    const d = parsed(
      formulationDoc({
        cell: 'interval',
        nodes: '[[-1], [1]]',
        shape: ['(1 - xi) / 2', '(1 + xi) / 2'],
        strain: 'bar',
        quadrature: '{ rule: gauss, points: 1 }'
      })
    ).definition;
    expect(d.area).toBe(1);
    expect(d.thickness).toBeUndefined();
    expect(d.coordinates).toEqual(['xi']);
  });

  it('evaluates node coordinates, material values and explicit points written as expressions', () => {
    const d = parsed(
      formulationDoc({
        nodes: '[[0, 0], [1, 0], [0, 1], [1/3, 1/3]]',
        shape: [
          '1 - xi - eta - 9 * xi * eta * (1 - xi - eta)',
          'xi - 9 * xi * eta * (1 - xi - eta)',
          'eta - 9 * xi * eta * (1 - xi - eta)',
          '27 * xi * eta * (1 - xi - eta)'
        ],
        quadrature: '{ rule: explicit, points: [[1/6, 1/6, 1/6], [2/3, 1/6, 1/6], [1/6, 2/3, 1/6]] }',
        extra: 'material: { E: 2 * 10^11, nu: 1/4 }'
      })
    ).definition;
    expect(d.nodes[3]).toEqual([1 / 3, 1 / 3]);
    expect(d.material).toEqual({ E: 2e11, nu: 0.25 });
    expect(d.quadrature).toEqual({
      rule: 'explicit',
      points: [
        [1 / 6, 1 / 6, 1 / 6],
        [2 / 3, 1 / 6, 1 / 6],
        [1 / 6, 2 / 3, 1 / 6]
      ]
    });
  });

  it('writes the default weight of a custom block out: detJ, or thickness × detJ where a thickness is given', () => {
    const strain = '{ dofs: [u], components: [ex], B: "[dNdx]", D: "E", rigid_modes: ["[1]"] }';
    const plain = parsed(
      formulationDoc({
        cell: 'interval',
        nodes: '[[-1], [1]]',
        shape: ['(1 - xi) / 2', '(1 + xi) / 2'],
        strain,
        quadrature: '{ rule: gauss, points: 1 }'
      })
    ).definition;
    expect((plain.strain as CustomStrain).weight).toBe('detJ');
    const thick = parsed(
      formulationDoc({
        strain:
          '{ dofs: [u, v], components: [exx, eyy, gxy], B: "[dNdx, 0; 0, dNdy; dNdy, dNdx]", D: "[1, 0, 0; 0, 1, 0; 0, 0, 1]", rigid_modes: ["[1, 0]"] }',
        extra: 'thickness: 2'
      })
    ).definition;
    expect((thick.strain as CustomStrain).weight).toBe('thickness * detJ');
  });

  it('accepts other names for the natural coordinates', () => {
    const d = parsed(
      formulationDoc({ shape: ['1 - r - s', 'r', 's'], extra: 'coordinates: [r, s]' })
    ).definition;
    expect(d.coordinates).toEqual(['r', 's']);
    expect(d.derivatives[0]).toEqual(['-1', '-1']);
  });
});

describe('warnings', () => {
  it('warns when explicit weights miss the cell’s measure, and still accepts the document', () => {
    const r = parseFormulation(formulationDoc({ quadrature: '{ rule: explicit, points: [[0.3, 0.3, 1]] }' }));
    expect(r.ok).toBe(true);
    expect(r.diagnostics).toEqual([
      {
        line: 11,
        column: 39,
        path: 'quadrature.points',
        message: 'the weights sum to 1; the measure of the reference triangle is 0.5',
        severity: 'warning'
      }
    ]);
  });
});
