/**
 * The element under verification, built from its document alone: reference cell, nodes, strain
 * kind (built-in or custom block), quadrature, and the batched element operations every stage uses.
 * Built-in kinds run natively in the kernel; a custom block's B, D, weight and rigid modes are
 * evaluated in the sandbox, one call per batch of elements.
 */
import {
  type CellName,
  type ElementOptions,
  type Material,
  type QuadratureRule,
  type ReferenceCell,
  type StrainKind,
  type Tabulation,
  dofsPerNode,
  elasticityMatrix,
  elementStiffness,
  explicitRule,
  gaussRule,
  mapPoints,
  referenceCell,
  rigidBodyModeCount,
  rigidBodyModes,
  simplexRule,
  stiffnessFromB,
  strainComponents,
  strainsAt
} from '@isoledger/kernel';
import type { CustomStrain, Definition } from '@isoledger/formulation';
import type { FieldRef, SandboxPool } from '@isoledger/sandbox';
import { symbolsOfField } from './symbols';
import { FIELD_DIFFERENCE_STEP } from './tolerances';

/** A check that cannot run for a reason the record should state (not a defect of the engine). */
export class CheckError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'CheckError';
  }
}

/** The sandbox as the engine uses it: every call timed, so the share of the sandbox in a run can be reported. */
export class Evaluator {
  sandboxMs = 0;
  calls = 0;
  constructor(
    readonly sandbox: SandboxPool,
    readonly def: Definition
  ) {}

  async tabulate(points: Float64Array): Promise<Tabulation> {
    const t0 = performance.now();
    try {
      return await this.sandbox.tabulate(this.def, points);
    } finally {
      this.sandboxMs += performance.now() - t0;
      this.calls++;
    }
  }

  /** `nodes`: entries per point when laid out point-major (B), so a fault names the point and the node. */
  async evaluate(
    field: FieldRef,
    env: Record<string, Float64Array | number>,
    count: number,
    nodes?: number
  ): Promise<Float64Array> {
    const t0 = performance.now();
    try {
      return await this.sandbox.evaluate(this.def, field, env, count, nodes ? { nodes } : {});
    } finally {
      this.sandboxMs += performance.now() - t0;
      this.calls++;
    }
  }
}

export interface ElementModel {
  def: Definition;
  cellName: CellName;
  cell: ReferenceCell;
  dim: number;
  nodes: number;
  /** nodes × dim natural coordinates */
  refNodes: Float64Array;
  /** the built-in kind, or null for a custom block */
  kind: StrainKind | null;
  custom: CustomStrain | null;
  dofsPerNode: number;
  ncomp: number;
  rigidCount: number;
  material: Material;
  options: ElementOptions;
  rule: QuadratureRule;
  evaluator: Evaluator;
}

/** The stiffness rule the document asks for. */
export function stiffnessRule(def: Definition): QuadratureRule {
  const q = def.quadrature;
  switch (q.rule) {
    case 'gauss':
      if (def.cell === 'triangle' || def.cell === 'tetrahedron') {
        throw new CheckError(`a Gauss rule does not fit the ${def.cell}; use a simplex or explicit rule`);
      }
      return gaussRule(def.cell, q.points);
    case 'simplex':
      if (def.cell !== 'triangle' && def.cell !== 'tetrahedron') {
        throw new CheckError(`a simplex rule does not fit the ${def.cell}; use a Gauss or explicit rule`);
      }
      return simplexRule(def.cell, q.degree);
    case 'explicit':
      return explicitRule(def.cell, q.points);
  }
}

/** The model of a parsed definition: everything derives from the document. */
export function elementModel(def: Definition, evaluator: Evaluator): ElementModel {
  const cell = referenceCell(def.cell);
  const dim = cell.dim;
  const nodes = def.nodes.length;
  const refNodes = new Float64Array(nodes * dim);
  def.nodes.forEach((p, i) => {
    for (let k = 0; k < dim; k++) refNodes[i * dim + k] = p[k];
  });
  const custom = typeof def.strain === 'string' ? null : def.strain;
  const kind = typeof def.strain === 'string' ? def.strain : null;
  return {
    def,
    cellName: def.cell,
    cell,
    dim,
    nodes,
    refNodes,
    kind,
    custom,
    dofsPerNode: kind ? dofsPerNode(kind) : custom!.dofs.length,
    ncomp: kind ? strainComponents(kind) : custom!.components.length,
    rigidCount: kind ? rigidBodyModeCount(kind) : custom!.rigid_modes.length,
    material: { E: def.material.E, nu: def.material.nu },
    options: { thickness: def.thickness ?? 1, area: def.area ?? 1 },
    rule: stiffnessRule(def),
    evaluator
  };
}

export function elementDofs(model: ElementModel): number {
  return model.nodes * model.dofsPerNode;
}

/**
 * Per-point symbols of the format for `elements` elements at the points of `tab`
 * (natural coordinates `natural`, points × dim), for fields evaluated once per point
 * (weight, body force …): count = elements × points, entry e·points + q.
 */
export interface PointEnv {
  count: number;
  env: Record<string, Float64Array | number>;
  /** physical positions, count × dim */
  x: Float64Array;
  detJ: Float64Array;
  /** physical derivatives per element and point, count × nodes × dim */
  dNdx: Float64Array;
}

const AXES = ['x', 'y', 'z'];

function constants(model: ElementModel): Record<string, number> {
  return {
    E: model.material.E,
    nu: model.material.nu,
    thickness: model.options.thickness ?? 1,
    area: model.options.area ?? 1,
    pi: Math.PI
  };
}

/** Geometry of a batch of elements (coords: elements × nodes × dim) at the points of `tab`. */
export function pointEnv(
  model: ElementModel,
  tab: Tabulation,
  natural: Float64Array,
  coords: Float64Array,
  elements: number
): PointEnv {
  const { dim, nodes } = model;
  const P = tab.points;
  const count = elements * P;
  const x = new Float64Array(count * dim);
  const detJ = new Float64Array(count);
  const dNdx = new Float64Array(count * nodes * dim);
  for (let e = 0; e < elements; e++) {
    const g = mapPoints(tab, coords.subarray(e * nodes * dim, (e + 1) * nodes * dim), e);
    x.set(g.x, e * P * dim);
    detJ.set(g.detJ, e * P);
    dNdx.set(g.dNdx, e * P * nodes * dim);
  }
  const env: Record<string, Float64Array | number> = { ...constants(model), detJ };
  for (let k = 0; k < dim; k++) {
    const xk = new Float64Array(count);
    const nk = new Float64Array(count);
    for (let p = 0; p < count; p++) {
      xk[p] = x[p * dim + k];
      nk[p] = natural[(p % P) * dim + k];
    }
    env[AXES[k]] = xk;
    env[model.def.coordinates[k]] = nk;
  }
  return { count, env, x, detJ, dNdx };
}

/** Keeps only the symbols a field of the document may use (the sandbox refuses others). */
function restrict(
  model: ElementModel,
  field: string,
  env: Record<string, Float64Array | number>
): Record<string, Float64Array | number> {
  const allowed = symbolsOfField(model.def, field);
  const out: Record<string, Float64Array | number> = {};
  for (const s of allowed) if (s in env) out[s] = env[s];
  return out;
}

/**
 * A custom block's B at the points of `tab` for a batch of elements: elements × points × ncomp × ndof,
 * node-major columns. One sandbox call evaluates every node at every point of every element
 * (entry (e·points + q)·nodes + i).
 */
export async function customB(
  model: ElementModel,
  tab: Tabulation,
  natural: Float64Array,
  pe: PointEnv
): Promise<Float64Array> {
  const { dim, nodes, ncomp, dofsPerNode: dpn } = model;
  const count = pe.count * nodes;
  const P = tab.points;
  const N = new Float64Array(count);
  const dNat = Array.from({ length: dim }, () => new Float64Array(count));
  const dPhys = Array.from({ length: dim }, () => new Float64Array(count));
  const xs = Array.from({ length: dim }, () => new Float64Array(count));
  const nat = Array.from({ length: dim }, () => new Float64Array(count));
  const detJ = new Float64Array(count);
  for (let p = 0; p < pe.count; p++) {
    const q = p % P;
    for (let i = 0; i < nodes; i++) {
      const c = p * nodes + i;
      N[c] = tab.N[q * nodes + i];
      detJ[c] = pe.detJ[p];
      for (let k = 0; k < dim; k++) {
        dNat[k][c] = tab.dN[(q * nodes + i) * dim + k];
        dPhys[k][c] = pe.dNdx[(p * nodes + i) * dim + k];
        xs[k][c] = pe.x[p * dim + k];
        nat[k][c] = natural[q * dim + k];
      }
    }
  }
  const env: Record<string, Float64Array | number> = { ...constants(model), N, detJ };
  for (let k = 0; k < dim; k++) {
    env['dNd' + AXES[k]] = dPhys[k];
    env['dNd' + model.def.coordinates[k]] = dNat[k];
    env[AXES[k]] = xs[k];
    env[model.def.coordinates[k]] = nat[k];
  }
  const values = await model.evaluator.evaluate('B', restrict(model, 'B', env), count, nodes);
  const ndof = nodes * dpn;
  const per = ncomp * dpn;
  if (values.length !== count * per) {
    throw new CheckError(
      `the custom B block gave ${values.length / count} values per node; ${ncomp} components × ${dpn} dofs expected`
    );
  }
  const B = new Float64Array(pe.count * ncomp * ndof);
  for (let p = 0; p < pe.count; p++) {
    for (let i = 0; i < nodes; i++) {
      const src = (p * nodes + i) * per;
      for (let r = 0; r < ncomp; r++) {
        for (let d = 0; d < dpn; d++) B[(p * ncomp + r) * ndof + i * dpn + d] = values[src + r * dpn + d];
      }
    }
  }
  return B;
}

/** The custom block's integrand weight at every point of the batch (the format's default is det J × thickness or area). */
export async function customWeight(model: ElementModel, pe: PointEnv): Promise<Float64Array> {
  const w = await model.evaluator.evaluate('weight', restrict(model, 'weight', pe.env), pe.count);
  if (w.length !== pe.count)
    throw new CheckError(
      `the custom weight gave ${w.length} values for ${pe.count} points; one per point expected`
    );
  return w;
}

/** D of the element (ncomp × ncomp): the kernel's isotropic matrix, or the custom block's D evaluated once. */
export async function elasticity(model: ElementModel): Promise<Float64Array> {
  if (model.kind) return elasticityMatrix(model.kind, model.material);
  const env = { ...constants(model) };
  const D = await model.evaluator.evaluate('D', restrict(model, 'D', env), 1);
  if (D.length !== model.ncomp * model.ncomp) {
    throw new CheckError(`the custom D gave ${D.length} values; ${model.ncomp} × ${model.ncomp} expected`);
  }
  return D;
}

export interface BatchOptions {
  /** run a built-in element as another built-in kind with the same B (plane strain as plane stress for the published benchmarks) */
  kind?: StrainKind;
  material?: Material;
  /** thickness or area of the problem (a published benchmark's own) */
  options?: ElementOptions;
}

/** Element stiffness matrices of a batch (coords: elements × nodes × dim) with the document's rule: elements × ndof². */
export async function stiffnessBatch(
  model: ElementModel,
  ruleTab: Tabulation,
  coords: Float64Array,
  elements: number,
  opts: BatchOptions = {}
): Promise<Float64Array> {
  const { nodes, dim } = model;
  const ndof = elementDofs(model);
  const out = new Float64Array(elements * ndof * ndof);
  const kind = opts.kind ?? model.kind;
  const material = opts.material ?? model.material;
  if (kind) {
    for (let e = 0; e < elements; e++) {
      elementStiffness(
        kind,
        ruleTab,
        model.rule.weights,
        coords.subarray(e * nodes * dim, (e + 1) * nodes * dim),
        material,
        { ...model.options, ...opts.options, element: e },
        out.subarray(e * ndof * ndof, (e + 1) * ndof * ndof)
      );
    }
    return out;
  }
  const pe = pointEnv(model, ruleTab, model.rule.points, coords, elements);
  const [B, w, D] = await Promise.all([
    customB(model, ruleTab, model.rule.points, pe),
    customWeight(model, pe),
    elasticity(model)
  ]);
  const P = ruleTab.points;
  const ncomp = model.ncomp;
  const wq = new Float64Array(P);
  for (let e = 0; e < elements; e++) {
    for (let q = 0; q < P; q++) wq[q] = model.rule.weights[q] * w[e * P + q];
    stiffnessFromB(
      B.subarray(e * P * ncomp * ndof, (e + 1) * P * ncomp * ndof),
      D,
      wq,
      P,
      ncomp,
      ndof,
      out.subarray(e * ndof * ndof, (e + 1) * ndof * ndof)
    );
  }
  return out;
}

/**
 * Strains (and D for stresses) at the points of `tab` for a batch of elements with nodal values u
 * (elements × ndof): elements × points × ncomp.
 */
export async function strainBatch(
  model: ElementModel,
  tab: Tabulation,
  natural: Float64Array,
  coords: Float64Array,
  u: Float64Array,
  elements: number
): Promise<Float64Array> {
  const { nodes, dim, ncomp } = model;
  const ndof = elementDofs(model);
  const P = tab.points;
  const out = new Float64Array(elements * P * ncomp);
  if (model.kind) {
    for (let e = 0; e < elements; e++) {
      strainsAt(
        model.kind,
        tab,
        coords.subarray(e * nodes * dim, (e + 1) * nodes * dim),
        u.subarray(e * ndof, (e + 1) * ndof),
        { ...model.options, element: e },
        out.subarray(e * P * ncomp, (e + 1) * P * ncomp)
      );
    }
    return out;
  }
  const pe = pointEnv(model, tab, natural, coords, elements);
  const B = await customB(model, tab, natural, pe);
  for (let p = 0; p < elements * P; p++) {
    const e = Math.floor(p / P);
    for (let r = 0; r < ncomp; r++) {
      let s = 0;
      const row = (p * ncomp + r) * ndof;
      for (let c = 0; c < ndof; c++) s += B[row + c] * u[e * ndof + c];
      out[p * ncomp + r] = s;
    }
  }
  return out;
}

/** Rigid-body modes at physical node positions (nodes × dim): (nodes · dofs) × modes, column per mode. */
export async function rigidModes(
  model: ElementModel,
  coords: Float64Array,
  count: number
): Promise<Float64Array> {
  if (model.kind) return rigidBodyModes(model.kind, coords, count, model.dim);
  const { dim, dofsPerNode: dpn, rigidCount: m } = model;
  const env: Record<string, Float64Array | number> = { ...constants(model) };
  for (let k = 0; k < dim; k++)
    env[AXES[k]] = Float64Array.from({ length: count }, (_, i) => coords[i * dim + k]);
  const values = await model.evaluator.evaluate('rigid_modes', restrict(model, 'rigid_modes', env), count);
  if (values.length !== count * m * dpn) {
    throw new CheckError(
      `the rigid modes gave ${values.length / count} values per node; ${m} modes × ${dpn} dofs expected`
    );
  }
  // sandbox layout: per node, mode-major (m × dofs)
  const R = new Float64Array(count * dpn * m);
  for (let i = 0; i < count; i++) {
    for (let j = 0; j < m; j++)
      for (let d = 0; d < dpn; d++) R[(i * dpn + d) * m + j] = values[(i * m + j) * dpn + d];
  }
  return R;
}

/** Evaluates a per-dof displacement or body-force field of a custom block at physical points (count × dim): count × dofs. */
export async function customField(
  model: ElementModel,
  field: 'patch.displacement' | 'convergence.displacement' | 'convergence.body_force',
  x: Float64Array,
  count: number
): Promise<Float64Array> {
  const dim = model.dim;
  const env: Record<string, Float64Array | number> = { ...constants(model) };
  for (let k = 0; k < dim; k++) env[AXES[k]] = Float64Array.from({ length: count }, (_, i) => x[i * dim + k]);
  const values = await model.evaluator.evaluate(field, restrict(model, field, env), count);
  if (values.length !== count * model.dofsPerNode) {
    throw new CheckError(
      `${field} gave ${values.length / count} values per point; one per dof (${model.dofsPerNode}) expected`
    );
  }
  return values;
}

/**
 * The strain of a displacement field through a custom block's own B at the points of `tab`, for a
 * batch of elements: elements × points × ncomp. B is linear in N and its derivatives (it is applied
 * to shape functions), so the field takes the place of one node: N := u_d, ∂N/∂x := ∂u_d/∂x (central
 * differences of the declared field), ∂N/∂ξ := J ∂u_d/∂x, and column d of the block is summed over d.
 */
export async function customStrainOfField(
  model: ElementModel,
  field: 'patch.displacement' | 'convergence.displacement',
  tab: Tabulation,
  natural: Float64Array,
  coords: Float64Array,
  elements: number
): Promise<Float64Array> {
  const { dim, nodes, ncomp, dofsPerNode: dpn } = model;
  const pe = pointEnv(model, tab, natural, coords, elements);
  const P = tab.points;
  const count = pe.count;
  const h = FIELD_DIFFERENCE_STEP;
  const stencil = 1 + 2 * dim;
  const pts = new Float64Array(count * stencil * dim);
  for (let p = 0; p < count; p++) {
    for (let s = 0; s < stencil; s++) {
      for (let k = 0; k < dim; k++) pts[(p * stencil + s) * dim + k] = pe.x[p * dim + k];
      if (s > 0) pts[(p * stencil + s) * dim + ((s - 1) >> 1)] += (s % 2 === 1 ? 1 : -1) * h;
    }
  }
  const u = await customField(model, field, pts, count * stencil);
  const n = count * dpn;
  const env: Record<string, Float64Array | number> = { ...constants(model) };
  const Nv = new Float64Array(n);
  const dx = Array.from({ length: dim }, () => new Float64Array(n));
  const dxi = Array.from({ length: dim }, () => new Float64Array(n));
  const xs = Array.from({ length: dim }, () => new Float64Array(n));
  const nat = Array.from({ length: dim }, () => new Float64Array(n));
  const detJ = new Float64Array(n);
  const J = new Float64Array(dim * dim);
  for (let p = 0; p < count; p++) {
    const e = Math.floor(p / P);
    const q = p - e * P;
    // J_km = Σ_i x_ik ∂N_i/∂ξ_m
    J.fill(0);
    for (let i = 0; i < nodes; i++) {
      for (let k = 0; k < dim; k++) {
        const xk = coords[(e * nodes + i) * dim + k];
        for (let m = 0; m < dim; m++) J[k * dim + m] += xk * tab.dN[(q * nodes + i) * dim + m];
      }
    }
    for (let d = 0; d < dpn; d++) {
      const c = p * dpn + d;
      Nv[c] = u[p * stencil * dpn + d];
      detJ[c] = pe.detJ[p];
      for (let k = 0; k < dim; k++) {
        dx[k][c] =
          (u[(p * stencil + 1 + 2 * k) * dpn + d] - u[(p * stencil + 2 + 2 * k) * dpn + d]) / (2 * h);
        xs[k][c] = pe.x[p * dim + k];
        nat[k][c] = natural[q * dim + k];
      }
      for (let m = 0; m < dim; m++) {
        let s = 0;
        for (let k = 0; k < dim; k++) s += dx[k][c] * J[k * dim + m];
        dxi[m][c] = s;
      }
    }
  }
  env.N = Nv;
  env.detJ = detJ;
  for (let k = 0; k < dim; k++) {
    env['dNd' + AXES[k]] = dx[k];
    env['dNd' + model.def.coordinates[k]] = dxi[k];
    env[AXES[k]] = xs[k];
    env[model.def.coordinates[k]] = nat[k];
  }
  const values = await model.evaluator.evaluate('B', restrict(model, 'B', env), n);
  const per = ncomp * dpn;
  const out = new Float64Array(count * ncomp);
  for (let p = 0; p < count; p++) {
    for (let r = 0; r < ncomp; r++) {
      let s = 0;
      for (let d = 0; d < dpn; d++) s += values[(p * dpn + d) * per + r * dpn + d];
      out[p * ncomp + r] = s;
    }
  }
  return out;
}
