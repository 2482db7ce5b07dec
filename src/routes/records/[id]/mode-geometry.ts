// The drawings of spurious modes: each eigenvector the zero-energy-modes check returned, split per
// node and laid on the check's own test element (its `nodes`), outlined along the element's edges.
import { nodalRows, outlineChains } from '$lib/components/charts/mesh-drawing';

export interface ModeDrawing {
  /** 1-based position among the spurious modes */
  index: number;
  eigenvalue: number | null;
  points: number[][];
  displacement: number[][];
  chains: number[][];
}

export interface ModeDrawings {
  drawings: ModeDrawing[];
  /** why a spurious mode could not be drawn; null when every one was */
  unavailable: string | null;
}

function isNumberArray(v: unknown): v is number[] {
  return Array.isArray(v) && v.every((x) => typeof x === 'number');
}

/** An entry of spuriousModes: { eigenvalue, vector } (verification engine), or a bare vector. */
export function readMode(entry: unknown): { vector: number[]; eigenvalue: number | null } | null {
  if (isNumberArray(entry)) return { vector: entry, eigenvalue: null };
  if (entry && typeof entry === 'object') {
    const e = entry as Record<string, unknown>;
    if (!isNumberArray(e.vector)) return null;
    return { vector: e.vector, eigenvalue: typeof e.eigenvalue === 'number' ? e.eigenvalue : null };
  }
  return null;
}

/** Drawings of every spurious mode of a zero-energy-modes check, on the test element the check states in `nodes`. */
export function modeDrawings(check: Record<string, unknown>): ModeDrawings {
  const entries = Array.isArray(check.spuriousModes) ? check.spuriousModes : [];
  if (entries.length === 0) return { drawings: [], unavailable: null };
  const nodes = check.nodes;
  if (!Array.isArray(nodes) || nodes.length === 0 || !nodes.every(isNumberArray)) {
    return { drawings: [], unavailable: 'the record does not state the node positions of its test element' };
  }
  const points = nodes as number[][];
  const dim = points[0].length;
  const chains = outlineChains(points);
  const drawings: ModeDrawing[] = [];
  let unavailable: string | null = null;
  entries.forEach((entry, i) => {
    const mode = readMode(entry);
    if (!mode) {
      unavailable = `spurious mode ${i + 1} carries no eigenvector`;
    } else if (mode.vector.length !== points.length * dim) {
      unavailable = `spurious mode ${i + 1} has ${mode.vector.length} values for ${points.length} nodes × ${dim} coordinates; only displacement dofs can be drawn`;
    } else {
      drawings.push({
        index: i + 1,
        eigenvalue: mode.eigenvalue,
        points,
        displacement: nodalRows(mode.vector, dim),
        chains
      });
    }
  });
  return { drawings, unavailable };
}
