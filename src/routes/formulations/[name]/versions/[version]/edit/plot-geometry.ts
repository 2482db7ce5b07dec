// Drawing helpers of the workbench's previews: the view of a reference cell on the page, the colour
// scale of a shape function and its contour lines (marching triangles over the plot grid).

/** Oblique (cabinet) projection of 3D natural coordinates: the second axis recedes at 30° with half length. */
const RECEDE = 0.5;
const RECEDE_ANGLE = Math.PI / 6;

/** Screen position (x right, y up) of a point in natural coordinates of any dimension. */
export function project(p: number[]): [number, number] {
  if (p.length === 1) return [p[0], 0];
  if (p.length === 2) return [p[0], p[1]];
  return [p[0] + RECEDE * Math.cos(RECEDE_ANGLE) * p[1], p[2] + RECEDE * Math.sin(RECEDE_ANGLE) * p[1]];
}

/** Direction along which the oblique projection collapses points; a face whose outward normal points against it faces the viewer. */
const VIEW = [-RECEDE * Math.cos(RECEDE_ANGLE), 1, -RECEDE * Math.sin(RECEDE_ANGLE)];

/** Depth along the viewing direction: larger is farther from the viewer. */
export function depth(p: number[]): number {
  return p.length === 3 ? p[0] * VIEW[0] + p[1] * VIEW[1] + p[2] * VIEW[2] : 0;
}

/** True when a flat patch of a convex cell's surface faces the viewer (its normal taken outward, away from the cell's centre). */
export function facesViewer(corners: number[][], centre: number[]): boolean {
  const [a, b, c] = corners;
  const u = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
  const v = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
  const n = [u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]];
  const outward =
    n[0] * (a[0] - centre[0]) + n[1] * (a[1] - centre[1]) + n[2] * (a[2] - centre[2]) >= 0 ? 1 : -1;
  return outward * (n[0] * VIEW[0] + n[1] * VIEW[1] + n[2] * VIEW[2]) < 0;
}

/** An edge of a convex cell is hidden when every face through it faces away from the viewer. */
export function edgeHidden(
  vertices: number[][],
  faces: number[][],
  edge: number[],
  centre: number[]
): boolean {
  const through = faces.filter((f) => f.includes(edge[0]) && f.includes(edge[1]));
  return (
    through.length > 0 &&
    through.every(
      (f) =>
        !facesViewer(
          f.map((v) => vertices[v]),
          centre
        )
    )
  );
}

/** The point seen from the opposite side: reflected through the centre, so the faces turned away come to the front. */
export function reflectThrough(p: number[], centre: number[]): number[] {
  return p.map((x, i) => 2 * centre[i] - x);
}

/** The centroid of a set of points. */
export function centroid(points: number[][]): number[] {
  const c = new Array(points[0].length).fill(0);
  for (const p of points) for (let i = 0; i < c.length; i++) c[i] += p[i] / points.length;
  return c;
}

export interface Frame {
  /** maps a screen point (x right, y up) to SVG pixels */
  toSvg(p: [number, number]): [number, number];
  width: number;
  height: number;
}

/** A frame that fits the given screen points into width × height with a margin, keeping the aspect ratio. */
export function fitFrame(points: [number, number][], width: number, height: number, margin: number): Frame {
  let x0 = Infinity;
  let x1 = -Infinity;
  let y0 = Infinity;
  let y1 = -Infinity;
  for (const [x, y] of points) {
    x0 = Math.min(x0, x);
    x1 = Math.max(x1, x);
    y0 = Math.min(y0, y);
    y1 = Math.max(y1, y);
  }
  const spanX = Math.max(x1 - x0, 1e-9);
  const spanY = y1 - y0;
  const scale =
    spanY > 1e-9
      ? Math.min((width - 2 * margin) / spanX, (height - 2 * margin) / spanY)
      : (width - 2 * margin) / spanX;
  const offX = (width - scale * spanX) / 2;
  const offY = (height - scale * spanY) / 2;
  return {
    width,
    height,
    toSvg: ([x, y]) => [offX + (x - x0) * scale, height - (offY + (y - y0) * scale)]
  };
}

const NEGATIVE = [42, 90, 124]; // slate blue
const ZERO = [251, 249, 244]; // bright paper
const POSITIVE = [35, 82, 71]; // deep verdigris

/** The magnitude that maps to full colour: the larger of |min| and |max|, so both signs share one scale. */
export function colourScale(min: number, max: number): number {
  return Math.max(Math.abs(min), Math.abs(max), 1e-9);
}

/** Diverging colour of a value as RGB: paper at zero, verdigris towards +scale, slate towards −scale. */
export function colourRgb(value: number, scale: number): [number, number, number] {
  const t = Math.min(1, Math.abs(value) / scale);
  const end = value >= 0 ? POSITIVE : NEGATIVE;
  return [0, 1, 2].map((i) => Math.round(ZERO[i] + (end[i] - ZERO[i]) * t)) as [number, number, number];
}

/** The same colour as a CSS rgb() string. */
export function colourOf(value: number, scale: number): string {
  const [r, g, b] = colourRgb(value, scale);
  return `rgb(${r}, ${g}, ${b})`;
}

/**
 * RGBA pixels of a field interpolated linearly over triangles (points in pixels of a width × height
 * image); pixels outside every triangle stay transparent.
 */
export function rasterizeField(
  width: number,
  height: number,
  points: [number, number][],
  values: number[],
  triangles: [number, number, number][],
  scale: number
): Uint8ClampedArray {
  const out = new Uint8ClampedArray(width * height * 4);
  for (const [i, j, k] of triangles) {
    const [ax, ay] = points[i];
    const [bx, by] = points[j];
    const [cx, cy] = points[k];
    const det = (by - cy) * (ax - cx) + (cx - bx) * (ay - cy);
    if (Math.abs(det) < 1e-12) continue;
    const x0 = Math.max(0, Math.floor(Math.min(ax, bx, cx)));
    const x1 = Math.min(width - 1, Math.ceil(Math.max(ax, bx, cx)));
    const y0 = Math.max(0, Math.floor(Math.min(ay, by, cy)));
    const y1 = Math.min(height - 1, Math.ceil(Math.max(ay, by, cy)));
    for (let y = y0; y <= y1; y++) {
      for (let x = x0; x <= x1; x++) {
        const px = x + 0.5;
        const py = y + 0.5;
        const l1 = ((by - cy) * (px - cx) + (cx - bx) * (py - cy)) / det;
        const l2 = ((cy - ay) * (px - cx) + (ax - cx) * (py - cy)) / det;
        const l3 = 1 - l1 - l2;
        // a hair of slack closes the seams between neighbouring triangles
        if (l1 < -1e-3 || l2 < -1e-3 || l3 < -1e-3) continue;
        const [r, g, b] = colourRgb(l1 * values[i] + l2 * values[j] + l3 * values[k], scale);
        const o = (y * width + x) * 4;
        out[o] = r;
        out[o + 1] = g;
        out[o + 2] = b;
        out[o + 3] = 255;
      }
    }
  }
  return out;
}

/** Triangles of the plot patches: quadrilaterals split along one diagonal. */
export function trianglesOf(patches: number[][]): [number, number, number][] {
  const out: [number, number, number][] = [];
  for (const p of patches) {
    if (p.length === 3) out.push([p[0], p[1], p[2]]);
    else if (p.length === 4) out.push([p[0], p[1], p[2]], [p[0], p[2], p[3]]);
  }
  return out;
}

/** Contour levels every 0.1 (or a coarser round step when the range is wide) strictly inside (min, max). */
export function contourLevels(min: number, max: number): number[] {
  const span = max - min;
  if (!(span > 1e-9)) return [];
  const step = span > 4 ? Math.pow(10, Math.ceil(Math.log10(span / 10))) : 0.1;
  const out: number[] = [];
  for (let k = Math.ceil(min / step); k * step < max; k++) {
    const level = Number((k * step).toFixed(10));
    if (level > min) out.push(level);
  }
  return out;
}

/** Segments of the level line `value = level` over triangles of the grid (quads are split in two), in point coordinates. */
export function contourSegments(
  points: [number, number][],
  values: number[],
  patches: number[][],
  level: number
): [[number, number], [number, number]][] {
  const out: [[number, number], [number, number]][] = [];
  const triangle = (i: number, j: number, k: number) => {
    const ids = [i, j, k];
    const crossings: [number, number][] = [];
    for (let e = 0; e < 3; e++) {
      const a = ids[e];
      const b = ids[(e + 1) % 3];
      const va = values[a] - level;
      const vb = values[b] - level;
      if ((va < 0 && vb >= 0) || (va >= 0 && vb < 0)) {
        const t = va / (va - vb);
        crossings.push([
          points[a][0] + t * (points[b][0] - points[a][0]),
          points[a][1] + t * (points[b][1] - points[a][1])
        ]);
      }
    }
    if (crossings.length === 2) out.push([crossings[0], crossings[1]]);
  };
  for (const [i, j, k] of trianglesOf(patches)) triangle(i, j, k);
  return out;
}

/** Greek letters for the default coordinate names, for labels only. */
export function coordinateLabel(name: string): string {
  return ({ xi: 'ξ', eta: 'η', zeta: 'ζ' } as Record<string, string>)[name] ?? name;
}

/** A number as a short label: up to four decimals, no trailing zeros. */
export function shortNumber(v: number): string {
  return Number(v.toFixed(4)).toString();
}
