// The shipped example catalogue: every document valid, the element families the product promises,
// summaries written for a methods engineer.
import { describe, expect, it } from 'vitest';
import { loadCatalogue, parseFormulation, type Definition } from '@isoledger/formulation';

const catalogue = loadCatalogue().map(({ file, source }) => {
  const r = parseFormulation(source);
  if (!r.ok) throw new Error(`${file}: ${JSON.stringify(r.diagnostics)}`);
  return { file, source, def: r.definition, diagnostics: r.diagnostics };
});
const byName = new Map(catalogue.map((c) => [c.def.name, c.def]));
const kindOf = (d: Definition) => (typeof d.strain === 'string' ? d.strain : 'custom');

describe('the example catalogue', () => {
  it('parses every document without a warning, each named like its file', () => {
    expect(catalogue.length).toBeGreaterThanOrEqual(15);
    for (const c of catalogue) {
      expect(c.diagnostics, c.file).toEqual([]);
      expect(c.file).toBe(`${c.def.name}.formulation.yaml`);
    }
  });

  // [name, cell, nodes, strain kind, quadrature] — the element families of the catalogue
  const expected: [string, string, number, string, string][] = [
    ['bar2-linear', 'interval', 2, 'bar', 'gauss 1'],
    ['bar3-quadratic', 'interval', 3, 'bar', 'gauss 2'],
    ['tri3-membrane', 'triangle', 3, 'plane-stress', 'simplex 1'],
    ['tri6-membrane', 'triangle', 6, 'plane-stress', 'simplex 2'],
    ['quad4-membrane', 'quadrilateral', 4, 'plane-stress', 'gauss 2'],
    ['quad8-serendipity-plane-strain', 'quadrilateral', 8, 'plane-strain', 'gauss 3'],
    ['quad9-lagrange-membrane', 'quadrilateral', 9, 'plane-stress', 'gauss 3'],
    ['tet4-solid', 'tetrahedron', 4, 'solid', 'simplex 1'],
    ['tet10-solid', 'tetrahedron', 10, 'solid', 'simplex 2'],
    ['hex8-solid', 'hexahedron', 8, 'solid', 'gauss 2'],
    ['hex20-serendipity', 'hexahedron', 20, 'solid', 'gauss 3'],
    ['quad4-axisymmetric', 'quadrilateral', 4, 'axisymmetric', 'gauss 2'],
    ['quad4-custom-plane-strain', 'quadrilateral', 4, 'custom', 'gauss 2'],
    ['quad4-one-point-hourglass', 'quadrilateral', 4, 'plane-stress', 'gauss 1'],
    ['tri3-unity-defect', 'triangle', 3, 'plane-stress', 'simplex 2']
  ];
  for (const [name, cell, nodes, kind, rule] of expected)
    it(`holds ${name}: ${cell}, ${nodes} nodes, ${kind}, ${rule}`, () => {
      const d = byName.get(name);
      expect(d).toBeDefined();
      const q = d!.quadrature;
      expect([
        d!.cell,
        d!.nodes.length,
        kindOf(d!),
        `${q.rule} ${q.rule === 'gauss' ? q.points : q.rule === 'simplex' ? q.degree : q.points.length}`
      ]).toEqual([cell, nodes, kind, rule]);
    });

  it('states the node order, the quadrature choice and the limits of a passing record in every summary', () => {
    for (const { def } of catalogue) {
      expect(def.summary, def.name).toMatch(/Node order/);
      expect(def.summary, def.name).toMatch(/Quadrature|quadrature/);
      expect(def.summary!.replace(/\s+/g, ' '), def.name).toMatch(
        /not approval for use: an analysis with it needs the judgement of a qualified engineer, and local codes and licensed practice govern/
      );
    }
  });

  it('marks the two flawed documents as flawed on purpose', () => {
    for (const name of ['quad4-one-point-hourglass', 'tri3-unity-defect'])
      expect(byName.get(name)!.title).toMatch(/flawed on purpose/);
  });

  it('has corner nodes first, at the corners of the reference cell', () => {
    const corners: Record<string, number[][]> = {
      interval: [[-1], [1]],
      triangle: [
        [0, 0],
        [1, 0],
        [0, 1]
      ],
      quadrilateral: [
        [-1, -1],
        [1, -1],
        [1, 1],
        [-1, 1]
      ],
      tetrahedron: [
        [0, 0, 0],
        [1, 0, 0],
        [0, 1, 0],
        [0, 0, 1]
      ],
      hexahedron: [
        [-1, -1, -1],
        [1, -1, -1],
        [1, 1, -1],
        [-1, 1, -1],
        [-1, -1, 1],
        [1, -1, 1],
        [1, 1, 1],
        [-1, 1, 1]
      ]
    };
    for (const { def } of catalogue)
      expect(def.nodes.slice(0, corners[def.cell].length), def.name).toEqual(corners[def.cell]);
  });

  it('the custom block declares B, D, rigid modes, a patch field and a convergence field', () => {
    const s = byName.get('quad4-custom-plane-strain')!.strain;
    expect(typeof s).toBe('object');
    if (typeof s !== 'object') return;
    expect(s.rigid_modes).toEqual(['[1, 0]', '[0, 1]', '[-y, x]']);
    expect(s.patch?.displacement).toHaveLength(2);
    expect(s.convergence?.body_force).toHaveLength(2);
  });
});
