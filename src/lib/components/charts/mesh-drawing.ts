// Geometry for drawing one element and a mode of it: outline chains through the nodes, a readable
// displacement scale, and an oblique projection of 3D elements onto the page.

/** Nodes of `coords` (n × dim) within distance tol of the segment a→b, ordered from a to b. */
function nodesOnSegment(
  coords: readonly number[][],
  a: readonly number[],
  b: readonly number[],
  tol: number
): number[] {
  const d = a.map((ai, k) => b[k] - ai);
  const len2 = d.reduce((s, v) => s + v * v, 0);
  if (len2 === 0) return [];
  const slack = tol / Math.sqrt(len2);
  const found: { node: number; t: number }[] = [];
  coords.forEach((p, node) => {
    const t = d.reduce((s, dk, k) => s + (p[k] - a[k]) * dk, 0) / len2;
    if (t < -slack || t > 1 + slack) return;
    const off = p.reduce((s, pk, k) => s + (pk - (a[k] + t * d[k])) ** 2, 0);
    if (off <= tol * tol) found.push({ node, t });
  });
  return found.sort((x, y) => x.t - y.t).map((f) => f.node);
}

/** Nodes closer than this fraction of the element's size to an edge lie on it (common practice, no source). */
export const ON_EDGE_TOLERANCE = 1e-9;

/**
 * For each edge (a pair of corner nodes), the chain of nodes that lie on it, from one end to the
 * other — so any node layout (corner-only, mid-side, serendipity, Lagrange) gets its own outline.
 */
export function edgeChains(
  points: readonly number[][],
  edges: readonly (readonly number[])[],
  tol = ON_EDGE_TOLERANCE
): number[][] {
  const size = diameter(points) || 1;
  return edges
    .map(([i, j]) => nodesOnSegment(points, points[i], points[j], tol * size))
    .filter((chain) => chain.length >= 2);
}

/** Corner indices of the convex hull of 2D points, counter-clockwise, collinear points left out (Andrew's monotone chain). */
export function hull2d(points: readonly number[][]): number[] {
  const order = points
    .map((_, i) => i)
    .sort((a, b) => points[a][0] - points[b][0] || points[a][1] - points[b][1]);
  const cross = (o: number, a: number, b: number) =>
    (points[a][0] - points[o][0]) * (points[b][1] - points[o][1]) -
    (points[a][1] - points[o][1]) * (points[b][0] - points[o][0]);
  const eps = 1e-12 * (diameter(points) || 1) ** 2;
  const half = (seq: number[]) => {
    const h: number[] = [];
    for (const i of seq) {
      while (h.length >= 2 && cross(h[h.length - 2], h[h.length - 1], i) <= eps) h.pop();
      h.push(i);
    }
    h.pop();
    return h;
  };
  return [...half(order), ...half([...order].reverse())];
}

/**
 * The outline of one element from its node positions alone, for an element whose shape is its reference
 * cell stretched along the axes (the test shape of the element checks): 1D the segment; 2D the convex
 * hull; 3D a box (12 edges between corners differing in one coordinate) or a tetrahedron (its 6 edges).
 * Returns chains of node indices along each edge, or [] when the shape is neither.
 */
export function outlineChains(points: readonly number[][]): number[][] {
  const n = points.length;
  const dim = points[0]?.length ?? 0;
  if (n < 2) return [];
  const size = diameter(points) || 1;
  const near = (a: number, b: number) => Math.abs(a - b) <= ON_EDGE_TOLERANCE * size;
  if (dim === 1) {
    const lo = points.reduce((m, p, i) => (p[0] < points[m][0] ? i : m), 0);
    const hi = points.reduce((m, p, i) => (p[0] > points[m][0] ? i : m), 0);
    return edgeChains(points, [[lo, hi]]);
  }
  if (dim === 2) {
    const h = hull2d(points);
    return h.length >= 3
      ? edgeChains(
          points,
          h.map((v, k) => [v, h[(k + 1) % h.length]])
        )
      : [];
  }
  if (dim !== 3) return [];
  const lo = [0, 1, 2].map((k) => Math.min(...points.map((p) => p[k])));
  const hi = [0, 1, 2].map((k) => Math.max(...points.map((p) => p[k])));
  const corners = points
    .map((p, i) => ({ p, i }))
    .filter(({ p }) => p.every((v, k) => near(v, lo[k]) || near(v, hi[k])));
  if (corners.length === 8) {
    const edges: number[][] = [];
    for (let a = 0; a < 8; a++)
      for (let b = a + 1; b < 8; b++) {
        const differ = [0, 1, 2].filter((k) => !near(corners[a].p[k], corners[b].p[k])).length;
        if (differ === 1) edges.push([corners[a].i, corners[b].i]);
      }
    return edgeChains(points, edges);
  }
  const s = points.map((p) => p.map((v, k) => (hi[k] > lo[k] ? (v - lo[k]) / (hi[k] - lo[k]) : 0)));
  const argBest = (score: (q: number[]) => number) =>
    s.reduce((m, q, i) => (score(q) > score(s[m]) ? i : m), 0);
  const tet = [
    argBest((q) => -(q[0] + q[1] + q[2])),
    argBest((q) => q[0]),
    argBest((q) => q[1]),
    argBest((q) => q[2])
  ];
  if (new Set(tet).size !== 4) return [];
  const edges: number[][] = [];
  for (let a = 0; a < 4; a++) for (let b = a + 1; b < 4; b++) edges.push([tet[a], tet[b]]);
  return edgeChains(points, edges);
}

/** Joins edge chains of a 2D cell, in the cell's edge order, into one closed boundary loop of node indices. */
export function boundaryLoop(chains: readonly number[][]): number[] {
  const loop: number[] = [];
  for (const chain of chains) {
    for (const node of chain) if (loop[loop.length - 1] !== node) loop.push(node);
  }
  if (loop.length > 1 && loop[0] === loop[loop.length - 1]) loop.pop();
  return loop;
}

/** Largest distance between two of the points: the element's size, for scaling the mode. */
export function diameter(points: readonly number[][]): number {
  let d = 0;
  for (let i = 0; i < points.length; i++)
    for (let j = i + 1; j < points.length; j++)
      d = Math.max(d, Math.hypot(...points[i].map((v, k) => v - points[j][k])));
  return d;
}

/** Fraction of the element's size the largest nodal displacement is drawn at: visible, without folding the element (common practice, no source). */
export const MODE_DRAWING_FRACTION = 0.125;

/** s such that max‖s·uᵢ‖ = fraction × diameter; 0 for a null vector. */
export function modeScale(
  points: readonly number[][],
  displacement: readonly number[][],
  fraction = MODE_DRAWING_FRACTION
): number {
  const umax = displacement.reduce((m, u) => Math.max(m, Math.hypot(...u)), 0);
  const size = diameter(points);
  return umax > 0 && size > 0 ? (fraction * size) / umax : 0;
}

/** Splits a node-major vector (node × dofs + dof) into one row per node. */
export function nodalRows(vector: readonly number[], dofsPerNode: number): number[][] {
  const rows: number[][] = [];
  for (let i = 0; i + dofsPerNode <= vector.length; i += dofsPerNode)
    rows.push(vector.slice(i, i + dofsPerNode));
  return rows;
}

/** xᵢ + s uᵢ for every node. */
export function displaced(
  points: readonly number[][],
  displacement: readonly number[][],
  scale: number
): number[][] {
  return points.map((p, i) => p.map((v, k) => v + scale * (displacement[i]?.[k] ?? 0)));
}

/** Receding-axis angle and foreshortening of the oblique projection: a cabinet view (z at 30°, halved) (common practice, no source). */
export const OBLIQUE_ANGLE = Math.PI / 6;
export const OBLIQUE_DEPTH = 0.5;

/** Page coordinates (right, up) of a point: 1D (x, 0), 2D (x, y), 3D cabinet projection (x + c z cos α, y + c z sin α). */
export function project(p: readonly number[]): [number, number] {
  if (p.length === 1) return [p[0], 0];
  if (p.length === 2) return [p[0], p[1]];
  return [
    p[0] + OBLIQUE_DEPTH * p[2] * Math.cos(OBLIQUE_ANGLE),
    p[1] + OBLIQUE_DEPTH * p[2] * Math.sin(OBLIQUE_ANGLE)
  ];
}

/**
 * Points and displacements in the plane of the drawing: 2D and 3D as they are (3D projected later), 1D
 * with the axial displacement u drawn transversely as (x, u) so the mode shape reads as a curve.
 */
export function drawingFrame(
  points: readonly number[][],
  displacement: readonly number[][]
): { points: number[][]; displacement: number[][]; transverse: boolean } {
  if (points[0]?.length === 1) {
    return {
      points: points.map((p) => [p[0], 0]),
      displacement: displacement.map((u) => [0, u[0] ?? 0]),
      transverse: true
    };
  }
  return {
    points: points.map((p) => [...p]),
    displacement: displacement.map((u) => [...u]),
    transverse: false
  };
}
