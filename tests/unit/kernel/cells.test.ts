import { describe, expect, it } from 'vitest';
import {
  CELL_NAMES,
  facetNormal,
  facetQuadrature,
  gaussRule,
  monomialIntegral,
  referenceCell,
  simplexRule,
  structuredMesh
} from '../../../packages/kernel/src/index';

describe('reference cells', () => {
  it('have the measures of their domains: 2, 1/2, 4, 1/6, 8 (closed form)', () => {
    const expected = { interval: 2, triangle: 0.5, quadrilateral: 4, tetrahedron: 1 / 6, hexahedron: 8 };
    for (const name of CELL_NAMES) {
      const c = referenceCell(name);
      expect(c.measure).toBe(expected[name]);
      expect(monomialIntegral(name, [0, 0, 0])).toBeCloseTo(expected[name], 15);
    }
  });

  it('are handed out fresh: a caller changing one changes neither later cells nor the meshes and rules built on them', () => {
    const mine = referenceCell('quadrilateral');
    mine.vertices.fill(7);
    mine.facets[0][0] = 3;
    mine.edges.length = 0;
    const again = referenceCell('quadrilateral');
    expect(Array.from(again.vertices)).toEqual([-1, -1, 1, -1, 1, 1, -1, 1]);
    expect(again.facets[0]).toEqual([0, 1]);
    expect(again.edges.length).toBe(4);
    expect(structuredMesh('quadrilateral', 2).nodeCount).toBe(9);
    // the bottom edge of the square, ξ₂ = −1
    const fq = facetQuadrature('quadrilateral', 0, 1);
    for (let q = 0; q < fq.count; q++) expect(fq.points[2 * q + 1]).toBe(-1);
  });

  it('list vertices, edges and faces with the counts of each cell (Euler: V − E + F = 2 for the solids)', () => {
    const counts: Record<string, [number, number, number]> = {
      interval: [2, 1, 2],
      triangle: [3, 3, 3],
      quadrilateral: [4, 4, 4],
      tetrahedron: [4, 6, 4],
      hexahedron: [8, 12, 6]
    };
    for (const name of CELL_NAMES) {
      const c = referenceCell(name);
      expect([c.vertexCount, c.edges.length, c.faces.length]).toEqual(counts[name]);
      expect(c.vertices.length).toBe(c.vertexCount * c.dim);
      if (c.dim === 3) expect(c.vertexCount - c.edges.length + c.faces.length).toBe(2);
      for (const e of c.edges) expect(e.length).toBe(2);
    }
  });

  it('have outward facet normals: every vertex lies on the inner side of every facet', () => {
    for (const name of CELL_NAMES) {
      const c = referenceCell(name);
      c.facets.forEach((f, k) => {
        const n = facetNormal(c, k);
        const p0 = c.vertices.subarray(f[0] * c.dim, f[0] * c.dim + c.dim);
        for (let v = 0; v < c.vertexCount; v++) {
          let s = 0;
          for (let d = 0; d < c.dim; d++) s += (c.vertices[v * c.dim + d] - p0[d]) * n[d];
          expect(s).toBeLessThanOrEqual(1e-15);
        }
      });
    }
  });

  it('test containment in the closed cell with a tolerance', () => {
    const t = referenceCell('triangle');
    expect(t.contains([0.5, 0.5])).toBe(true);
    expect(t.contains([0.5, 0.5 + 1e-9])).toBe(false);
    expect(t.contains([1 / 3, 2 / 3])).toBe(true);
    expect(t.contains([-1e-13, 0.2])).toBe(true);
    expect(referenceCell('hexahedron').contains([1, -1, 0.3])).toBe(true);
    expect(referenceCell('tetrahedron').contains([0.4, 0.4, 0.4])).toBe(false);
    expect(() => t.contains([0.1])).toThrow(/1 coordinates; the triangle has 2/);
  });

  it('sample interior points reproducibly from a seed, uniformly (sample mean → centroid)', () => {
    for (const name of CELL_NAMES) {
      const c = referenceCell(name);
      const a = c.sampleInterior(2000, 42);
      expect(Array.from(a)).toEqual(Array.from(c.sampleInterior(2000, 42)));
      expect(Array.from(a.subarray(0, 10))).not.toEqual(Array.from(c.sampleInterior(10, 43).subarray(0, 10)));
      const mean = new Array(c.dim).fill(0);
      for (let i = 0; i < 2000; i++) {
        const p = a.subarray(i * c.dim, (i + 1) * c.dim);
        expect(c.contains(p, 0)).toBe(true);
        for (let k = 0; k < c.dim; k++) mean[k] += p[k] / 2000;
      }
      // centroid from the monomial integrals ∫ξ / measure; 2000 samples put the mean within ~4 standard errors
      const rule = name === 'triangle' || name === 'tetrahedron' ? simplexRule(name, 1) : gaussRule(name, 1);
      for (let k = 0; k < c.dim; k++) {
        const e = [0, 0, 0];
        e[k] = 1;
        expect(Math.abs(mean[k] - monomialIntegral(name, e) / c.measure)).toBeLessThan(0.05);
        expect(rule.points[k]).toBeCloseTo(monomialIntegral(name, e) / c.measure, 14);
      }
    }
  });
});
