import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  boundaryLoop,
  diameter,
  displaced,
  drawingFrame,
  hull2d,
  modeScale,
  MODE_DRAWING_FRACTION,
  nodalRows,
  outlineChains,
  project
} from '../../../src/lib/components/charts/mesh-drawing';

// Node positions below are the reference cells' standard node layouts (corner, mid-side, centre nodes)
// stretched along the axes, as the element checks' regular test shape is (common practice, no source).
const quad4 = [
  [0, 0],
  [2, 0],
  [2, 1],
  [0, 1]
];
const quad9 = [...quad4, [1, 0], [2, 0.5], [1, 1], [0, 0.5], [1, 0.5]];
const tri6 = [
  [0, 0],
  [2, 0],
  [0, 1],
  [1, 0],
  [1, 0.5],
  [0, 0.5]
];
const box = (x: number, y: number, z: number) =>
  [
    [0, 0, 0],
    [1, 0, 0],
    [1, 1, 0],
    [0, 1, 0],
    [0, 0, 1],
    [1, 0, 1],
    [1, 1, 1],
    [0, 1, 1]
  ].map((p) => [p[0] * x, p[1] * y, p[2] * z]);

describe('element outlines from node positions', () => {
  it('outlines a four-node quadrilateral by its four edges, in order around it', () => {
    const chains = outlineChains(quad4);
    expect(chains).toHaveLength(4);
    expect(boundaryLoop(chains).sort()).toEqual([0, 1, 2, 3]);
  });

  it('runs each edge of a nine-node quadrilateral through its mid-side node and leaves the centre out', () => {
    const chains = outlineChains(quad9);
    expect(chains).toHaveLength(4);
    expect(chains.every((c) => c.length === 3)).toBe(true);
    const loop = boundaryLoop(chains);
    expect(loop).toHaveLength(8);
    expect(loop).not.toContain(8);
  });

  it('outlines a six-node triangle by three chains of three nodes', () => {
    const chains = outlineChains(tri6);
    expect(chains).toHaveLength(3);
    expect(chains.map((c) => c.length)).toEqual([3, 3, 3]);
  });

  it('draws the 12 edges of a stretched hexahedron and the 6 of a tetrahedron', () => {
    expect(outlineChains(box(2, 1, 1.5))).toHaveLength(12);
    const tet10 = [
      [0, 0, 0],
      [2, 0, 0],
      [0, 1, 0],
      [0, 0, 1.5],
      [1, 0, 0],
      [1, 0.5, 0],
      [0, 0.5, 0],
      [0, 0, 0.75],
      [1, 0, 0.75],
      [0, 0.5, 0.75]
    ];
    const chains = outlineChains(tet10);
    expect(chains).toHaveLength(6);
    expect(chains.every((c) => c.length === 3)).toBe(true);
  });

  it('orders a two-node bar from one end to the other, with an interior node between', () => {
    expect(outlineChains([[2], [0], [1]])).toEqual([[1, 2, 0]]);
  });
});

describe('convex hull', () => {
  it('keeps only extreme points: every other point lies left of every hull edge (property)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.tuple(fc.integer({ min: -50, max: 50 }), fc.integer({ min: -50, max: 50 })), {
          minLength: 3,
          maxLength: 30
        }),
        (pts) => {
          const points = pts.map(([x, y]) => [x, y]);
          const h = hull2d(points);
          if (h.length < 3) return;
          for (let k = 0; k < h.length; k++) {
            const a = points[h[k]];
            const b = points[h[(k + 1) % h.length]];
            for (const p of points) {
              const cross = (b[0] - a[0]) * (p[1] - a[1]) - (b[1] - a[1]) * (p[0] - a[0]);
              expect(cross).toBeGreaterThanOrEqual(0);
            }
          }
        }
      )
    );
  });
});

describe('mode scaling and projection', () => {
  it('scales the largest nodal displacement to an eighth of the element size', () => {
    const u = nodalRows([0, 0, 0, 0, 0.3, -0.4, 0, 0], 2);
    const s = modeScale(quad4, u);
    const moved = displaced(quad4, u, s);
    const largest = Math.max(...moved.map((p, i) => Math.hypot(p[0] - quad4[i][0], p[1] - quad4[i][1])));
    expect(MODE_DRAWING_FRACTION).toBe(0.125);
    expect(largest).toBeCloseTo(0.125 * diameter(quad4), 12);
    expect(diameter(quad4)).toBeCloseTo(Math.sqrt(5), 15);
    expect(modeScale(quad4, nodalRows(new Array(8).fill(0), 2))).toBe(0);
  });

  it('projects 3D points in a cabinet view: z recedes at 30° and half length', () => {
    const [x, y] = project([0, 0, 1]);
    expect(x).toBeCloseTo(0.5 * Math.cos(Math.PI / 6), 15);
    expect(y).toBeCloseTo(0.25, 15);
    expect(project([3, 4])).toEqual([3, 4]);
    expect(project([3])).toEqual([3, 0]);
  });

  it('draws a bar mode as the axial displacement turned sideways', () => {
    const f = drawingFrame([[0], [1]], [[0.5], [-0.5]]);
    expect(f.transverse).toBe(true);
    expect(f.points).toEqual([
      [0, 0],
      [1, 0]
    ]);
    expect(f.displacement).toEqual([
      [0, 0.5],
      [0, -0.5]
    ]);
  });
});
