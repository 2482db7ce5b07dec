/** One problem found in a document, in the document's own coordinates (1-based line and column, UTF-16 code units). */
export interface Diagnostic {
  line: number;
  column: number;
  /** where in the document: `shape[2]`, `strain.B`, `nodes[3][1]`; empty for the document as a whole */
  path: string;
  message: string;
  severity: 'error' | 'warning';
}

export type CellName = 'interval' | 'triangle' | 'quadrilateral' | 'tetrahedron' | 'hexahedron';
export type StrainKind = 'bar' | 'plane-stress' | 'plane-strain' | 'axisymmetric' | 'solid';

/** A strain operator written out by the author (formulation-format.md, "Custom strain block"). */
export interface CustomStrain {
  dofs: string[];
  components: string[];
  /** the block of one node: components × dofs */
  B: string;
  /** components × components */
  D: string;
  /** integrand weight at a point; the default is made explicit by the parser (`detJ`, `thickness * detJ` or `area * detJ`) */
  weight: string;
  rigid_modes: string[];
  patch?: { displacement: string[] };
  convergence?: { displacement: string[]; body_force: string[] };
}

export type Quadrature =
  | { rule: 'gauss'; points: number }
  | { rule: 'simplex'; degree: number }
  | { rule: 'explicit'; points: number[][] };

/** A parsed, validated formulation; every expression re-printed by the parser in canonical form. */
export interface Definition {
  format: 1;
  name: string;
  title: string;
  summary?: string;
  cell: CellName;
  coordinates: string[];
  /** natural coordinates of each node, evaluated */
  nodes: number[][];
  /** the helper definitions as written, re-printed */
  definitions: string[];
  /** one expression per node, definitions inlined, re-printed */
  shape: string[];
  /** derivatives[i][k] = ∂N_i/∂coordinates[k], simplified and re-printed (derived, not part of definitionHash) */
  derivatives: string[][];
  strain: StrainKind | CustomStrain;
  quadrature: Quadrature;
  material: { E: number; nu: number };
  thickness?: number;
  area?: number;
}

export type ParseResult =
  | {
      ok: true;
      definition: Definition;
      sourceHash: string;
      definitionHash: string;
      diagnostics: Diagnostic[];
    }
  | { ok: false; diagnostics: Diagnostic[] };

/** The fields whose expressions the format defines; each has its own symbols (see symbolsForField). */
export type ExpressionField =
  | 'nodes'
  | 'definitions'
  | 'shape'
  | 'B'
  | 'D'
  | 'weight'
  | 'rigid_modes'
  | 'patch.displacement'
  | 'convergence.displacement'
  | 'convergence.body_force'
  | 'material'
  | 'thickness'
  | 'area'
  | 'quadrature.points'
  | 'derivatives';
