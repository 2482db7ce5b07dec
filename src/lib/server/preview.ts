// The workbench's live view of a document: parse it, and when it is valid tabulate its shape functions
// on a grid over the reference cell inside the sandbox (user expressions never run on the host).
import { ALLOWED_FUNCTIONS, parseFormulation, symbolsForField } from '@isoledger/formulation';
import type { CellName, Definition, Diagnostic, ExpressionField } from '@isoledger/formulation';
import { referenceCell } from '@isoledger/kernel';
import { SandboxError, SandboxPool } from '@isoledger/sandbox';
import { LineCounter, parse as parseYaml, parseDocument } from 'yaml';

/** Points per direction on a 2D cell: a 25 × 25 grid (24 subdivisions), fine enough to see the shape of a quadratic. */
const AREA_DIVISIONS = 24;
/** Points on the interval: 101 (100 subdivisions). */
const LINE_DIVISIONS = 100;
/** Subdivisions of each face of a 3D cell: 13 × 13 points per face keeps a hexahedron near a thousand points. */
const FACE_DIVISIONS = 12;
/** Values and coordinates are rounded to this absolute step: six decimals keep the plots exact to the eye and the payload small. */
export const PREVIEW_PRECISION = 1e-6;

/** The fields whose expressions the workbench highlights and completes, as the format names them. */
export const EXPRESSION_FIELDS = [
  'nodes',
  'definitions',
  'shape',
  'B',
  'D',
  'weight',
  'rigid_modes',
  'patch.displacement',
  'convergence.displacement',
  'convergence.body_force'
] as const satisfies readonly ExpressionField[];
type WorkbenchField = (typeof EXPRESSION_FIELDS)[number];

export interface ShapePreview {
  cell: CellName;
  dim: 1 | 2 | 3;
  coordinates: string[];
  /** the reference cell: vertices (natural coordinates), edges and faces as vertex indices */
  vertices: number[][];
  edges: number[][];
  faces: number[][];
  /** the document's nodes, evaluated */
  nodes: number[][];
  /** where N was tabulated: a line (1D), an area (2D) or the cell's faces (3D); patches index into points */
  plot: { kind: 'line' | 'area' | 'surface'; points: number[][]; patches: number[][] };
  /** N[p][i]: shape function i at plot point p, rounded to `precision` */
  N: number[][];
  precision: number;
}

export interface FieldSymbols {
  cell: CellName;
  coordinates: string[];
  /** the symbols each expression field allows (from the format's own table) */
  fields: Partial<Record<WorkbenchField, string[]>>;
  /** names the document's `definitions` introduce (helpers and their parameters) */
  helpers: string[];
  functions: string[];
}

export interface ValidationResult {
  ok: boolean;
  diagnostics: Diagnostic[];
  definitionHash?: string;
  definition?: Definition;
  preview?: ShapePreview | null;
  /** why there is no preview although the document is valid (a fault while tabulating, for instance) */
  previewNote?: string;
  symbols: FieldSymbols | null;
}

let pool: SandboxPool | null = null;

/** One warm isolate for the previews of this process; created on first use. */
function sandbox(): SandboxPool {
  pool ??= new SandboxPool({ poolSize: 1 });
  return pool;
}

function round(v: number): number {
  const r = Math.round(v / PREVIEW_PRECISION) * PREVIEW_PRECISION;
  // six decimals exactly as printed, and never a negative zero
  return Number(r.toFixed(6)) + 0;
}

/** Points on one face or cell: a quadrilateral by the bilinear map of its four corners, a triangle by barycentric steps. */
function faceGrid(
  corners: number[][],
  m: number,
  offset: number
): { points: number[][]; patches: number[][] } {
  const points: number[][] = [];
  const patches: number[][] = [];
  const dim = corners[0].length;
  if (corners.length === 4) {
    for (let j = 0; j <= m; j++) {
      for (let i = 0; i <= m; i++) {
        const s = i / m;
        const t = j / m;
        const w = [(1 - s) * (1 - t), s * (1 - t), s * t, (1 - s) * t];
        points.push(
          Array.from({ length: dim }, (_, d) => round(w.reduce((acc, wk, k) => acc + wk * corners[k][d], 0)))
        );
      }
    }
    const row = m + 1;
    for (let j = 0; j < m; j++) {
      for (let i = 0; i < m; i++) {
        const a = offset + j * row + i;
        patches.push([a, a + 1, a + row + 1, a + row]);
      }
    }
  } else {
    const index = new Map<string, number>();
    for (let j = 0; j <= m; j++) {
      for (let i = 0; i + j <= m; i++) {
        index.set(`${i},${j}`, offset + points.length);
        const s = i / m;
        const t = j / m;
        points.push(
          Array.from({ length: dim }, (_, d) =>
            round(corners[0][d] + s * (corners[1][d] - corners[0][d]) + t * (corners[2][d] - corners[0][d]))
          )
        );
      }
    }
    const at = (i: number, j: number) => index.get(`${i},${j}`) as number;
    for (let j = 0; j < m; j++) {
      for (let i = 0; i + j < m; i++) {
        patches.push([at(i, j), at(i + 1, j), at(i, j + 1)]);
        if (i + j + 1 < m) patches.push([at(i + 1, j), at(i + 1, j + 1), at(i, j + 1)]);
      }
    }
  }
  return { points, patches };
}

/** The plot grid of a cell: 101 points on the interval, a 25 × 25 (or triangular) grid in 2D, the faces' grids in 3D. */
export function previewGrid(cellName: CellName): ShapePreview['plot'] {
  const cell = referenceCell(cellName);
  const vertices = rows(cell.vertices, cell.dim);
  if (cell.dim === 1) {
    const points = Array.from({ length: LINE_DIVISIONS + 1 }, (_, k) => [
      round(-1 + (2 * k) / LINE_DIVISIONS)
    ]);
    const patches = Array.from({ length: LINE_DIVISIONS }, (_, k) => [k, k + 1]);
    return { kind: 'line', points, patches };
  }
  if (cell.dim === 2) {
    return { kind: 'area', ...faceGrid(vertices, AREA_DIVISIONS, 0) };
  }
  const points: number[][] = [];
  const patches: number[][] = [];
  for (const face of cell.faces) {
    const g = faceGrid(
      face.map((v) => vertices[v]),
      FACE_DIVISIONS,
      points.length
    );
    points.push(...g.points);
    patches.push(...g.patches);
  }
  return { kind: 'surface', points, patches };
}

function rows(flat: Float64Array, width: number): number[][] {
  const out: number[][] = [];
  for (let r = 0; r < flat.length / width; r++)
    out.push(Array.from(flat.subarray(r * width, (r + 1) * width)));
  return out;
}

/** N at every grid point of the cell, tabulated in the sandbox. */
export async function shapePreview(def: Definition): Promise<ShapePreview> {
  const cell = referenceCell(def.cell);
  const plot = previewGrid(def.cell);
  const flat = new Float64Array(plot.points.length * cell.dim);
  plot.points.forEach((p, k) => flat.set(p, k * cell.dim));
  const tab = await sandbox().tabulate(def, flat);
  const N: number[][] = [];
  for (let p = 0; p < tab.points; p++) {
    N.push(Array.from(tab.N.subarray(p * tab.nodes, (p + 1) * tab.nodes), round));
  }
  return {
    cell: def.cell,
    dim: cell.dim,
    coordinates: def.coordinates,
    vertices: rows(cell.vertices, cell.dim),
    edges: cell.edges,
    faces: cell.dim === 3 ? cell.faces : [],
    nodes: def.nodes,
    plot,
    N,
    precision: PREVIEW_PRECISION
  };
}

/** Path segments of a diagnostic path such as `shape[2]` or `strain.rigid_modes[1]`. */
function pathSegments(path: string): (string | number)[] {
  const out: (string | number)[] = [];
  for (const m of path.matchAll(/([^.[\]]+)|\[(\d+)\]/g)) out.push(m[2] !== undefined ? Number(m[2]) : m[1]);
  return out;
}

/** Line and column (1-based) of the value at `path` in the source; the document's start when it cannot be found. */
export function locatePath(source: string, path: string): { line: number; column: number } {
  const lineCounter = new LineCounter();
  const doc = parseDocument(source, { lineCounter, keepSourceTokens: false });
  // a derivative's fault is the fault of the shape function it comes from
  const segments = pathSegments(path.replace(/^derivatives\[(\d+)\].*$/, 'shape[$1]'));
  for (let n = segments.length; n > 0; n--) {
    const node = doc.getIn(segments.slice(0, n), true) as { range?: [number, number, number] } | undefined;
    if (node && typeof node === 'object' && node.range) {
      const pos = lineCounter.linePos(node.range[0]);
      return { line: pos.line, column: pos.col };
    }
  }
  return { line: 1, column: 1 };
}

const HELPER_NAME = /^\s*([A-Za-z_][A-Za-z0-9_]*)\s*(?:\(([^)]*)\))?\s*=/;

/** Cell and coordinates read leniently from the YAML (also from an invalid document), and what each field allows there. */
export function fieldSymbols(source: string, def?: Definition): FieldSymbols | null {
  let cellName: unknown = def?.cell;
  let coordinates: unknown = def?.coordinates;
  let definitions: unknown = def?.definitions;
  if (!def) {
    try {
      const raw = parseYaml(source, { maxAliasCount: 16, prettyErrors: false }) as Record<
        string,
        unknown
      > | null;
      if (raw && typeof raw === 'object') {
        cellName = raw.cell;
        coordinates = raw.coordinates;
        definitions = raw.definitions;
      }
    } catch {
      return null;
    }
  }
  let cell;
  try {
    cell = referenceCell(cellName as CellName);
  } catch {
    return null;
  }
  const defaults = ['xi', 'eta', 'zeta'].slice(0, cell.dim);
  const coords =
    Array.isArray(coordinates) &&
    coordinates.length === cell.dim &&
    coordinates.every((c) => typeof c === 'string')
      ? (coordinates as string[])
      : defaults;
  const fields: FieldSymbols['fields'] = {};
  for (const field of EXPRESSION_FIELDS) {
    try {
      fields[field] = [...symbolsForField(cell.name, coords, field)];
    } catch {
      // a field the format gives no symbol table for is left out
    }
  }
  const helpers = new Set<string>();
  if (Array.isArray(definitions)) {
    for (const d of definitions) {
      const m = typeof d === 'string' ? HELPER_NAME.exec(d) : null;
      if (!m) continue;
      helpers.add(m[1]);
      for (const p of (m[2] ?? '').split(',')) if (p.trim()) helpers.add(p.trim());
    }
  }
  return {
    cell: cell.name,
    coordinates: coords,
    fields,
    helpers: [...helpers],
    functions: [...ALLOWED_FUNCTIONS]
  };
}

/** Parse, and when valid tabulate the preview; a fault while tabulating becomes a diagnostic at the field it names. */
export async function validateForWorkbench(source: string): Promise<ValidationResult> {
  const parsed = parseFormulation(source);
  if (!parsed.ok) {
    return { ok: false, diagnostics: parsed.diagnostics, symbols: fieldSymbols(source) };
  }
  const result: ValidationResult = {
    ok: true,
    diagnostics: parsed.diagnostics,
    definitionHash: parsed.definitionHash,
    definition: parsed.definition,
    preview: null,
    symbols: fieldSymbols(source, parsed.definition)
  };
  try {
    result.preview = await shapePreview(parsed.definition);
  } catch (e) {
    if (!(e instanceof SandboxError)) throw e;
    const where = e.path ? locatePath(source, e.path) : { line: 1, column: 1 };
    result.previewNote = `the shape functions could not be tabulated over the cell: ${e.message}`;
    result.diagnostics = [
      ...result.diagnostics,
      { ...where, path: e.path ?? '', message: e.message, severity: 'warning' }
    ];
  }
  return result;
}
