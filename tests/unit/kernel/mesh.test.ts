import { describe, expect, it } from 'vitest';
import {
  KernelError,
  MACNEAL_HARDER_MEMBRANE_PATCH,
  MACNEAL_HARDER_SOLID_PATCH,
  CANTILEVER_STRIP,
  TAPERED_MEMBRANE,
  BAR_PATCH,
  AXISYMMETRIC_PATCH,
  type Mesh,
  definePatch,
  facetNodes,
  gaussRule,
  macroPatchMesh,
  mapPoints,
  elementCoords,
  refinePatch,
  referenceCell,
  simplexRule,
  structuredMesh,
  structuredPatch
} from '../../../packages/kernel/src/index';
import { HEX20_NODES, HEX8, Q4, Q9_NODES, T3, T4, T6, tabulate } from './fixtures';

/** Every interior facet is shared by exactly two elements, and the boundary facets cover the domain's boundary. */
function facetUse(mesh: Mesh, referenceNodes: Float64Array): Map<string, number> {
  const on = facetNodes(referenceNodes, mesh.cell);
  const use = new Map<string, number>();
  for (let e = 0; e < mesh.elementCount; e++)
    for (const f of on) {
      const key = f
        .map((i) => mesh.elements[e * mesh.elementNodes + i])
        .sort((a, b) => a - b)
        .join(',');
      use.set(key, (use.get(key) ?? 0) + 1);
    }
  return use;
}

function minDetJ(mesh: Mesh, el: typeof Q4, points: Float64Array): number {
  const tab = tabulate(el, points);
  let min = Infinity;
  for (let e = 0; e < mesh.elementCount; e++) {
    const g = mapPoints(tab, elementCoords(mesh, e), e);
    for (const d of g.detJ) min = Math.min(min, d);
  }
  return min;
}

describe('macro-patch meshes', () => {
  it('give a conforming nine-node mesh of the membrane patch: 8 vertices + 12 edges + 5 faces = 25 nodes (Euler count)', () => {
    const mesh = macroPatchMesh(Q9_NODES, 'quadrilateral', MACNEAL_HARDER_MEMBRANE_PATCH);
    expect(mesh.nodeCount).toBe(25);
    expect(mesh.elementCount).toBe(5);
    // the outer boundary: 4 macro edges, each with 3 nodes → 8 distinct nodes
    expect(mesh.boundary.facetCount).toBe(4);
    expect(mesh.boundary.nodes.length).toBe(8);
    const use = facetUse(mesh, Q9_NODES);
    expect([...use.values()].filter((c) => c === 2).length).toBe(8); // interior edges
    expect([...use.values()].filter((c) => c === 1).length).toBe(4);
  });

  it('split the membrane patch into ten six-node triangles with shared diagonals: 8 + (12 + 5) = 25 nodes', () => {
    const mesh = macroPatchMesh(T6.nodes, 'triangle', MACNEAL_HARDER_MEMBRANE_PATCH);
    expect(mesh.elementCount).toBe(10);
    expect(mesh.nodeCount).toBe(25);
    const use = facetUse(mesh, T6.nodes);
    expect([...use.values()].every((c) => c === 1 || c === 2)).toBe(true);
    expect([...use.values()].filter((c) => c === 1).length).toBe(4);
    expect(minDetJ(mesh, T6, simplexRule('triangle', 2).points)).toBeGreaterThan(0);
  });

  it('give a conforming twenty-node mesh of the solid patch: 16 vertices + 32 edges = 48 nodes (Euler: V − E + F − C = 1)', () => {
    const mesh = macroPatchMesh(HEX20_NODES, 'hexahedron', MACNEAL_HARDER_SOLID_PATCH);
    expect(mesh.elementCount).toBe(7);
    expect(mesh.nodeCount).toBe(48);
    expect(mesh.boundary.facetCount).toBe(6);
    expect(mesh.boundary.nodes.length).toBe(8 + 12);
  });

  it('split hexahedra into tetrahedra whose faces match across cells (solid patch and perturbed cube)', () => {
    for (const patch of [MACNEAL_HARDER_SOLID_PATCH, structuredPatch(3, 3, { perturbation: 0.2, seed: 5 })]) {
      const mesh = macroPatchMesh(T4.nodes, 'tetrahedron', patch);
      const use = facetUse(mesh, T4.nodes);
      expect([...use.values()].every((c) => c === 1 || c === 2)).toBe(true);
      // the boundary of the cube: 6 faces, each split into 2 triangles per macro face on it
      const macroBoundaryFaces = patch === MACNEAL_HARDER_SOLID_PATCH ? 6 : 6 * 9;
      expect([...use.values()].filter((c) => c === 1).length).toBe(2 * macroBoundaryFaces);
      expect(minDetJ(mesh, T4, simplexRule('tetrahedron', 1).points)).toBeGreaterThan(0);
      // volumes add up to the unit cube
      let volume = 0;
      const tab = tabulate(T4, simplexRule('tetrahedron', 1).points);
      for (let e = 0; e < mesh.elementCount; e++)
        volume += mapPoints(tab, elementCoords(mesh, e)).detJ[0] / 6;
      expect(volume).toBeCloseTo(1, 12);
    }
  });

  it('use the six-tetrahedron Kuhn split on lexicographic grids: 6 k³ tetrahedra, (k + 1)³ nodes', () => {
    const mesh = structuredMesh('tetrahedron', 4);
    expect(mesh.elementCount).toBe(6 * 64);
    expect(mesh.nodeCount).toBe(125);
    expect(mesh.boundary.facetCount).toBe(12 * 16);
    // quadratic tetrahedron layout: nodes at vertices and edge midpoints
    const t10 = Float64Array.from([
      0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1, 0.5, 0, 0, 0.5, 0.5, 0, 0, 0.5, 0, 0, 0, 0.5, 0.5, 0, 0.5, 0, 0.5,
      0.5
    ]);
    const quadratic = structuredMesh('tetrahedron', 2, { referenceNodes: t10 });
    expect(quadratic.nodeCount).toBe(125); // the 4 × 4 × 4 grid of half steps
  });

  it('structured meshes of interval, square and cube have the expected counts and positive Jacobians', () => {
    expect(structuredMesh('interval', 7).nodeCount).toBe(8);
    const q = structuredMesh('quadrilateral', 5, { perturbation: 0.2, seed: 3 });
    expect(q.nodeCount).toBe(36);
    expect(q.boundary.facetCount).toBe(20);
    expect(q.boundary.nodes.length).toBe(20);
    expect(minDetJ(q, Q4, gaussRule('quadrilateral', 2).points)).toBeGreaterThan(0);
    const t = structuredMesh('triangle', 5);
    expect(t.elementCount).toBe(50);
    expect(minDetJ(t, T3, simplexRule('triangle', 1).points)).toBeGreaterThan(0);
    const h = structuredMesh('hexahedron', 3, { perturbation: 0.24, seed: 9 });
    expect(h.nodeCount).toBe(64);
    expect(minDetJ(h, HEX8, gaussRule('hexahedron', 2).points)).toBeGreaterThan(0);
    const q9 = structuredMesh('quadrilateral', 4, { referenceNodes: Q9_NODES });
    expect(q9.nodeCount).toBe(81);
  });

  it('perturb reproducibly, within the bound, and keep the boundary on the unit square', () => {
    const a = structuredPatch(2, 8, { perturbation: 0.2, seed: 11 });
    const b = structuredPatch(2, 8, { perturbation: 0.2, seed: 11 });
    const c = structuredPatch(2, 8, { perturbation: 0.2, seed: 12 });
    expect(Array.from(a.vertices)).toEqual(Array.from(b.vertices));
    expect(Array.from(a.vertices)).not.toEqual(Array.from(c.vertices));
    for (let v = 0; v < a.vertexCount; v++) {
      const i = v % 9;
      const j = Math.floor(v / 9);
      const [x, y] = [a.vertices[2 * v], a.vertices[2 * v + 1]];
      expect(Math.abs(x - i / 8)).toBeLessThanOrEqual(0.2 / 8);
      expect(Math.abs(y - j / 8)).toBeLessThanOrEqual(0.2 / 8);
      if (i === 0 || i === 8) expect(x).toBe(i / 8);
      if (j === 0 || j === 8) expect(y).toBe(j / 8);
    }
    expect(() => structuredPatch(2, 4, { perturbation: 0.3 })).toThrow(/perturbation must lie in/);
  });

  it('refine a macro cell through its bilinear map: the tapered membrane keeps its corners and area 1056 (trapezoid rule)', () => {
    const fine = refinePatch(TAPERED_MEMBRANE, 4);
    expect(fine.cellCount).toBe(16);
    expect(fine.vertexCount).toBe(25);
    const mesh = macroPatchMesh(Q4.nodes, 'quadrilateral', fine);
    const rule = gaussRule('quadrilateral', 2);
    const tab = tabulate(Q4, rule.points);
    let area = 0;
    for (let e = 0; e < mesh.elementCount; e++) {
      const g = mapPoints(tab, elementCoords(mesh, e));
      for (let q = 0; q < 4; q++) area += g.detJ[q] * rule.weights[q];
    }
    // area of the trapezoid with parallel sides 44 and 16, width 48
    expect(area).toBeCloseTo(((44 + 16) / 2) * 48, 10);
  });

  it('carry their sources and the data of the published problems', () => {
    for (const p of [
      MACNEAL_HARDER_MEMBRANE_PATCH,
      MACNEAL_HARDER_SOLID_PATCH,
      BAR_PATCH,
      AXISYMMETRIC_PATCH,
      TAPERED_MEMBRANE,
      ...Object.values(CANTILEVER_STRIP)
    ]) {
      expect(p.source.length).toBeGreaterThan(10);
    }
    expect(MACNEAL_HARDER_MEMBRANE_PATCH.material).toEqual({ E: 1.0e6, nu: 0.25 });
    expect(MACNEAL_HARDER_MEMBRANE_PATCH.thickness).toBe(0.001);
    expect(CANTILEVER_STRIP.trapezoidal.reference?.tipShearDeflection).toBe(0.1081);
    // the strip is 6 × 0.2 for every shape: total area 1.2
    for (const p of Object.values(CANTILEVER_STRIP)) {
      const mesh = macroPatchMesh(Q4.nodes, 'quadrilateral', p);
      const rule = gaussRule('quadrilateral', 2);
      const tab = tabulate(Q4, rule.points);
      let area = 0;
      for (let e = 0; e < mesh.elementCount; e++) {
        const g = mapPoints(tab, elementCoords(mesh, e));
        for (let q = 0; q < 4; q++) area += g.detJ[q] * rule.weights[q];
      }
      expect(area, p.name).toBeCloseTo(1.2, 12);
    }
  });

  it('reject inverted macro cells, foreign node layouts and mismatched cells with errors naming them', () => {
    expect(() =>
      definePatch(
        'clockwise',
        'quadrilateral',
        [
          [0, 0],
          [0, 1],
          [1, 1],
          [1, 0]
        ],
        [[0, 1, 2, 3]],
        'test data'
      )
    ).toThrow(/cell 0 has det J = .* at its centre/);
    try {
      macroPatchMesh(Float64Array.of(0, 0, 1.5, 0, 0, 1), 'triangle', MACNEAL_HARDER_MEMBRANE_PATCH);
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(KernelError);
      expect((e as Error).message).toMatch(/reference node 1 .* outside the triangle/);
    }
    expect(() => macroPatchMesh(Q4.nodes, 'quadrilateral', MACNEAL_HARDER_SOLID_PATCH)).toThrow(
      /2-dimensional/
    );
    expect(() => macroPatchMesh(T3.nodes, 'triangle', BAR_PATCH)).toThrow(
      /2-dimensional, the patch 'bar-patch' is 1-dimensional/
    );
  });

  it('merge coincident nodes within a tolerance relative to the mesh size, at any scale of the coordinates', () => {
    // two unit squares side by side whose shared edge is given twice, the second copy moved by δ along x
    const pair = (delta: number, scale: number) =>
      definePatch(
        'split pair',
        'quadrilateral',
        [
          [0, 0],
          [1, 0],
          [1, 1],
          [0, 1],
          [1 + delta, 0],
          [2, 0],
          [2, 1],
          [1 + delta, 1]
        ].map((v) => v.map((c) => c * scale)),
        [
          [0, 1, 2, 3],
          [4, 5, 6, 7]
        ],
        'test data'
      );
    // MERGE_RELATIVE_TOLERANCE is 1e-8 of the shortest edge (1 here): δ = 1e-10 merges, δ = 1e-6 does not
    for (const scale of [1, 1e-6, 1e6]) {
      const merged = macroPatchMesh(Q9_NODES, 'quadrilateral', pair(1e-10, scale));
      const apart = macroPatchMesh(Q9_NODES, 'quadrilateral', pair(1e-6, scale));
      expect(merged.nodeCount, `scale ${scale}`).toBe(15); // a 5 × 3 grid of nodes
      expect(apart.nodeCount, `scale ${scale}`).toBe(18);
      // first-seen numbering, independent of the scale
      expect(Array.from(merged.elements)).toEqual(
        Array.from(macroPatchMesh(Q9_NODES, 'quadrilateral', pair(1e-10, 1)).elements)
      );
    }
  });

  it('find the nodes on each reference facet for any layout', () => {
    expect(facetNodes(Q9_NODES, 'quadrilateral')).toEqual([
      [0, 1, 4],
      [1, 2, 5],
      [2, 3, 6],
      [0, 3, 7]
    ]);
    expect(facetNodes(T6.nodes, 'triangle')[1]).toEqual([1, 2, 4]);
    expect(facetNodes(HEX20_NODES, 'hexahedron').every((f) => f.length === 8)).toBe(true);
    expect(referenceCell('hexahedron').facets.length).toBe(6);
  });
});
