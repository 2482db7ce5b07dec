/**
 * §3 of verification.md: patch tests A, B and C on the published macro patches, meshed with the
 * element's own node layout (Zienkiewicz & Taylor's classification of the variants).
 */
import {
  AXISYMMETRIC_PATCH,
  BAR_PATCH,
  type ElementOptions,
  MACNEAL_HARDER_MEMBRANE_PATCH,
  MACNEAL_HARDER_SOLID_PATCH,
  type MacroPatch,
  type Material,
  type Mesh,
  SparseSymmetric,
  type Tabulation,
  elasticityMatrix,
  facetNodes,
  macroPatchMesh,
  solveWithDirichlet
} from '@isoledger/kernel';
import type { Definition } from '@isoledger/formulation';
import { tractionOf, multiplyInto, strainOf } from './kinematics';
import {
  type ElementModel,
  customField,
  customStrainOfField,
  elasticity,
  rigidModes,
  strainBatch
} from './model';
import type { CheckResult, CheckStatus } from './record';
import { facetRules, facetSet } from './reference';
import {
  type MeshSystem,
  boundaryFacets,
  facetLoads,
  gather,
  meshSystem,
  nodeDofs,
  pointPositions
} from './system';
import { PATCH_TOLERANCE } from './tolerances';

/** The patch-test id of a definition: by strain kind, custom blocks by the dimension of their cell. */
export function patchId(def: Definition): string {
  if (typeof def.strain === 'string') {
    return def.strain === 'solid'
      ? 'patch-solid'
      : def.strain === 'bar'
        ? 'patch-bar'
        : def.strain === 'axisymmetric'
          ? 'patch-axisymmetric'
          : 'patch-membrane';
  }
  return def.cell === 'interval'
    ? 'patch-bar'
    : def.cell === 'tetrahedron' || def.cell === 'hexahedron'
      ? 'patch-solid'
      : 'patch-membrane';
}

/** The exact constant-strain fields of the contract: u(x) = G x, G per kind (verification.md §3). */
const LINEAR_FIELDS: Record<string, number[]> = {
  // u = 1e-3 (x + y/2), v = 1e-3 (y + x/2)
  'patch-membrane': [1e-3, 0.5e-3, 0.5e-3, 1e-3],
  // u = 1e-3 (2x + y + z)/2, v = 1e-3 (x + 2y + z)/2, w = 1e-3 (x + y + 2z)/2
  'patch-solid': [1e-3, 0.5e-3, 0.5e-3, 0.5e-3, 1e-3, 0.5e-3, 0.5e-3, 0.5e-3, 1e-3],
  // u = 1e-3 x
  'patch-bar': [1e-3],
  // u = 1e-3 r, w = 2e-3 z
  'patch-axisymmetric': [1e-3, 0, 0, 2e-3]
};

const PATCHES: Record<string, MacroPatch> = {
  'patch-membrane': MACNEAL_HARDER_MEMBRANE_PATCH,
  'patch-solid': MACNEAL_HARDER_SOLID_PATCH,
  'patch-bar': BAR_PATCH,
  'patch-axisymmetric': AXISYMMETRIC_PATCH
};

export interface Variant {
  variant: 'A' | 'B' | 'C';
  status: CheckStatus;
  message?: string;
  maxResidual?: number;
  maxDisplacementError?: number;
  maxStressError?: number;
  supports?: number[];
}

const fmtX = (x: ArrayLike<number>, dim: number, axes: string[]) =>
  Array.from({ length: dim }, (_, k) => `${axes[k]} = ${+x[k].toPrecision(6)}`).join(', ');

/** The exact state of the patch: nodal displacements, strains and stresses at points. */
interface ExactState {
  /** nodal values, nodeCount × dofs */
  u: Float64Array;
  /** stresses at the stiffness rule points, elements × points × ncomp */
  stress: Float64Array;
  /** the stress vector of the kind at any point (built-in kinds: constant) */
  stressAt?: (x: Float64Array, out: Float64Array) => Float64Array;
}

export async function patchCheck(
  model: ElementModel,
  tabs: Record<string, Tabulation>,
  progress: (f: number) => void
): Promise<CheckResult> {
  const id = patchId(model.def);
  const macro = PATCHES[id];
  const custom = model.custom;
  if (custom && !custom.patch) {
    return {
      id,
      required: true,
      status: 'skipped',
      message:
        'the custom strain block declares no `patch` field, so there is no exact state to test against; add one (formulation-format.md)'
    };
  }
  const ruleTab = tabs.rule;
  const dim = model.dim;
  const axes = model.kind === 'axisymmetric' ? ['r', 'z'] : ['x', 'y', 'z'];
  // built-in kinds use the published problem's material and thickness; a custom block its own (its D is written for them)
  const material: Material = custom ? model.material : (macro.material ?? model.material);
  const options: ElementOptions = custom
    ? model.options
    : { thickness: macro.thickness ?? model.options.thickness, area: macro.area ?? model.options.area };
  const mesh = macroPatchMesh(model.refNodes, model.cellName, macro);
  const sys = await meshSystem(model, ruleTab, mesh, { material, options });
  progress(0.3);
  const dpn = model.dofsPerNode;
  const ncomp = model.ncomp;
  const E = mesh.elementCount;
  const P = ruleTab.points;

  // the exact state
  const D = custom ? await elasticity(model) : elasticityMatrix(model.kind!, material);
  const exact: ExactState = { u: new Float64Array(sys.ndof), stress: new Float64Array(E * P * ncomp) };
  if (custom) {
    exact.u = await customField(model, 'patch.displacement', mesh.coords, mesh.nodeCount);
    const eps = await customStrainOfField(
      model,
      'patch.displacement',
      ruleTab,
      model.rule.points,
      sys.coords,
      E
    );
    const s = new Float64Array(ncomp);
    for (let p = 0; p < E * P; p++) {
      multiplyInto(D, eps, ncomp, ncomp, s, p * ncomp);
      exact.stress.set(s, p * ncomp);
    }
  } else {
    const kind = model.kind!;
    const G = LINEAR_FIELDS[id];
    const uAt = (x: ArrayLike<number>, out: Float64Array) => {
      for (let c = 0; c < dpn; c++) {
        let s = 0;
        for (let k = 0; k < dim; k++) s += G[c * dim + k] * x[k];
        out[c] = s;
      }
      return out;
    };
    const u = new Float64Array(dpn);
    const eps = new Float64Array(ncomp);
    exact.stressAt = (x, out) => multiplyInto(D, strainOf(kind, uAt(x, u), G, x, eps), ncomp, ncomp, out);
    for (let i = 0; i < mesh.nodeCount; i++)
      exact.u.set(uAt(mesh.coords.subarray(i * dim, (i + 1) * dim), u), i * dpn);
    const X = pointPositions(ruleTab, sys.coords, E, dim);
    const s = new Float64Array(ncomp);
    for (let p = 0; p < E * P; p++)
      exact.stress.set(exact.stressAt(X.subarray(p * dim, (p + 1) * dim), s), p * ncomp);
  }

  const boundary = new Uint8Array(mesh.nodeCount);
  for (const n of mesh.boundary.nodes) boundary[n] = 1;
  const X = pointPositions(ruleTab, sys.coords, E, dim);
  const variants: Variant[] = [];

  // A: every node prescribed; the residual at interior dofs must vanish
  {
    const r = sys.K.multiply(exact.u);
    const scale = magnitudeOfTerms(sys.K, exact.u);
    let worst = 0;
    let at = -1;
    for (let i = 0; i < mesh.nodeCount; i++) {
      if (boundary[i]) continue;
      for (let c = 0; c < dpn; c++) {
        const v = Math.abs(r[i * dpn + c]) / scale;
        if (!(v <= worst)) {
          worst = v;
          at = i;
        }
      }
    }
    const ok = worst <= PATCH_TOLERANCE;
    variants.push({
      variant: 'A',
      status: ok ? 'pass' : 'fail',
      maxResidual: worst,
      ...(ok
        ? {}
        : {
            message: `variant A: residual force ${worst.toPrecision(3)} (relative) at interior node ${at + 1} (${fmtX(mesh.coords.subarray(at * dim), dim, axes)}) with every node on the exact field`
          })
    });
  }
  progress(0.45);

  // B: boundary nodes prescribed, interior solved
  {
    const fixed = nodeDofs(mesh.boundary.nodes, dpn);
    const values = Float64Array.from(fixed, (d) => exact.u[d]);
    variants.push(
      await solvedVariant('B', model, sys, tabs, exact, new Float64Array(sys.ndof), fixed, values, X, D, axes)
    );
  }
  progress(0.7);

  // C: minimal supports, consistent tractions of the exact stress on the whole boundary
  if (custom) {
    variants.push({
      variant: 'C',
      status: 'skipped',
      message:
        'variant C: a custom strain block states no traction operator, so consistent boundary loads cannot be formed; A and B ran'
    });
  } else {
    const kind = model.kind!;
    const R = await rigidModes(model, mesh.coords, mesh.nodeCount);
    const fixed = minimalSupports(R, model.rigidCount, mesh.boundary.nodes, dpn);
    const values = Float64Array.from(fixed, (d) => exact.u[d]);
    const rules = facetRules(model);
    const facetTabs = rules.map((_, f) => tabs[facetSet(f)]);
    const sig = new Float64Array(ncomp);
    const f = facetLoads(
      kind,
      sys,
      boundaryFacets(mesh, facetNodes(model.refNodes, model.cellName)),
      facetTabs,
      rules,
      (x, n, out) => {
        tractionOf(kind, exact.stressAt!(x, sig), n, out);
      },
      options
    );
    const v = await solvedVariant('C', model, sys, tabs, exact, f, fixed, values, X, D, axes);
    v.supports = Array.from(fixed);
    variants.push(v);
  }
  progress(1);

  const failed = variants.find((v) => v.status === 'fail');
  const errored = variants.find((v) => v.status === 'error');
  const status: CheckStatus = failed ? 'fail' : errored ? 'error' : 'pass';
  const notes = variants.filter((v) => v.status !== 'pass' && v.message).map((v) => v.message!);
  const metric = Math.max(
    0,
    ...variants.flatMap((v) =>
      [v.maxResidual, v.maxDisplacementError, v.maxStressError].filter(
        (x): x is number => typeof x === 'number'
      )
    )
  );
  return {
    id,
    required: true,
    status,
    metric,
    tolerance: PATCH_TOLERANCE,
    patch: macro.name,
    ...(exact.stressAt ? { exactStress: Array.from(exact.stress.subarray(0, ncomp)) } : {}),
    source: macro.source,
    elements: mesh.elementCount,
    nodes: mesh.nodeCount,
    variants,
    ...(notes.length ? { message: notes.join('; ') } : {})
  };
}

/** max_i Σ_j |K_ij| |u_j|: the size of the terms whose sum is the residual, for a relative measure. */
function magnitudeOfTerms(K: SparseSymmetric, u: Float64Array): number {
  const abs = SparseSymmetric.fromUpperCSR(K.n, K.rowPtr!, K.cols, K.values.map(Math.abs));
  const r = abs.multiply(u.map(Math.abs));
  let m = 0;
  for (let i = 0; i < r.length; i++) m = Math.max(m, r[i]);
  return m > 0 ? m : 1;
}

/**
 * Supports that remove exactly the rigid-body modes: greedy pivoting on the rows of R (dof × mode)
 * among the boundary nodes' dofs, each step taking the dof that restrains the most of what is left.
 */
export function minimalSupports(
  R: Float64Array,
  m: number,
  boundaryNodes: Int32Array,
  dpn: number
): Int32Array {
  const candidates = nodeDofs(boundaryNodes, dpn);
  const rows = Array.from(candidates, (d) => Float64Array.from({ length: m }, (_, j) => R[d * m + j]));
  const chosen: number[] = [];
  for (let step = 0; step < m; step++) {
    let best = -1;
    let bestNorm = 0;
    rows.forEach((r, t) => {
      const n = Math.hypot(...r);
      if (n > bestNorm * (1 + 1e-9)) {
        bestNorm = n;
        best = t;
      }
    });
    if (best < 0 || bestNorm < 1e-12) break;
    const q = rows[best].map((v) => v / bestNorm);
    chosen.push(candidates[best]);
    for (const r of rows) {
      let d = 0;
      for (let j = 0; j < m; j++) d += r[j] * q[j];
      for (let j = 0; j < m; j++) r[j] -= d * q[j];
    }
  }
  return Int32Array.from(chosen.sort((a, b) => a - b));
}

async function solvedVariant(
  variant: 'B' | 'C',
  model: ElementModel,
  sys: MeshSystem,
  tabs: Record<string, Tabulation>,
  exact: ExactState,
  f: Float64Array,
  fixed: Int32Array,
  values: Float64Array,
  X: Float64Array,
  D: Float64Array,
  axes: string[]
): Promise<Variant> {
  const mesh: Mesh = sys.mesh;
  const dim = model.dim;
  const dpn = model.dofsPerNode;
  const ncomp = model.ncomp;
  let u: Float64Array;
  try {
    u = solveWithDirichlet(sys.K, f, fixed, values).u;
  } catch (err) {
    return {
      variant,
      status: 'error',
      message: `variant ${variant}: the patch cannot be solved (${(err as Error).message}); a singular patch usually means spurious zero-energy modes`
    };
  }
  let uScale = 0;
  for (let i = 0; i < exact.u.length; i++) uScale = Math.max(uScale, Math.abs(exact.u[i]));
  let du = 0;
  let duAt = -1;
  for (let i = 0; i < mesh.nodeCount; i++) {
    for (let c = 0; c < dpn; c++) {
      const v = Math.abs(u[i * dpn + c] - exact.u[i * dpn + c]) / (uScale || 1);
      if (!(v <= du)) {
        du = v;
        duAt = i;
      }
    }
  }
  const E = mesh.elementCount;
  const P = tabs.rule.points;
  const eps = await strainBatch(model, tabs.rule, model.rule.points, sys.coords, gather(sys, u), E);
  let sScale = 0;
  for (let i = 0; i < exact.stress.length; i++) sScale = Math.max(sScale, Math.abs(exact.stress[i]));
  let ds = 0;
  let dsAt = -1;
  let dsComp = 0;
  const s = new Float64Array(ncomp);
  for (let p = 0; p < E * P; p++) {
    multiplyInto(D, eps, ncomp, ncomp, s, p * ncomp);
    for (let r = 0; r < ncomp; r++) {
      const v = Math.abs(s[r] - exact.stress[p * ncomp + r]) / (sScale || 1);
      if (!(v <= ds)) {
        ds = v;
        dsAt = p;
        dsComp = r;
      }
    }
  }
  const okU = du <= PATCH_TOLERANCE;
  const okS = ds <= PATCH_TOLERANCE;
  const out: Variant = {
    variant,
    status: okU && okS ? 'pass' : 'fail',
    maxDisplacementError: du,
    maxStressError: ds
  };
  if (!okU || !okS) {
    const parts: string[] = [];
    if (!okU)
      parts.push(
        `displacement off by ${du.toPrecision(3)} (relative) at node ${duAt + 1} (${fmtX(mesh.coords.subarray(duAt * dim), dim, axes)})`
      );
    if (!okS) {
      const e = Math.floor(dsAt / P);
      const q = dsAt - e * P;
      parts.push(
        `stress component ${dsComp + 1} off by ${ds.toPrecision(3)} (relative) at quadrature point ${q + 1} of element ${e + 1} (${fmtX(X.subarray(dsAt * dim), dim, axes)})`
      );
    }
    out.message = `variant ${variant}: ${parts.join('; ')}`;
  }
  return out;
}
