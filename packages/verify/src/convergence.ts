/**
 * §4 of verification.md: code verification by a manufactured solution. A coarse grid of the unit
 * interval, square or cube (axisymmetric: r ∈ [1, 2], z ∈ [0, 1]) is mildly distorted with a seed
 * and then divided uniformly through its multilinear cells, so every refinement keeps the shape of
 * the coarse cells (the meshes stay asymptotically regular, and each element's own node layout is
 * placed by the same maps). Errors are integrated with a rule of higher degree than the element's.
 */
import {
  type MacroPatch,
  type Tabulation,
  assembleVector,
  macroPatchMesh,
  refinePatch,
  ruleOfDegree,
  solveWithDirichlet,
  structuredPatch
} from '@isoledger/kernel';
import { manufacturedField } from './manufactured';
import { multiplyInto } from './kinematics';
import {
  type ElementModel,
  customField,
  customStrainOfField,
  customWeight,
  elasticity,
  pointEnv,
  strainBatch
} from './model';
import type { CheckResult } from './record';
import { gather, meshSystem, nodeDofs, pointGeometry } from './system';
import { CONVERGENCE_PERTURBATION, CONVERGENCE_SEED, RATE_MARGIN } from './tolerances';

/** Divisions per side of the coarse grid. */
const COARSE_DIVISIONS = 2;
/** Uniform subdivisions of each coarse cell, per dimension: at least four meshes (verification.md §4). */
const LEVELS: Record<number, number[]> = { 1: [2, 4, 8, 16], 2: [2, 4, 8, 16], 3: [1, 2, 3, 4] };

export interface SeriesPoint {
  h: number;
  dofs: number;
  l2: number;
  energy: number;
}

/** The coarse, seeded, mildly distorted grid of the convergence domain. */
export function convergenceDomain(model: ElementModel): MacroPatch {
  const coarse = structuredPatch(model.dim as 1 | 2 | 3, COARSE_DIVISIONS, {
    perturbation: CONVERGENCE_PERTURBATION,
    seed: CONVERGENCE_SEED
  });
  if (model.kind !== 'axisymmetric') return coarse;
  const vertices = coarse.vertices.slice();
  for (let i = 0; i < coarse.vertexCount; i++) vertices[i * 2] += 1;
  return {
    ...coarse,
    name: 'axisymmetric-convergence-domain',
    vertices,
    source: `${coarse.source}, shifted to r ∈ [1, 2]`
  };
}

/** Observed order between two meshes: log(e₁/e₂) / log(h₁/h₂). */
export function observedOrder(a: SeriesPoint, b: SeriesPoint, key: 'l2' | 'energy'): number {
  return Math.log(a[key] / b[key]) / Math.log(a.h / b.h);
}

export async function convergenceCheck(
  model: ElementModel,
  ruleTab: Tabulation,
  degree: number,
  progress: (f: number) => void
): Promise<CheckResult> {
  const id = 'convergence';
  const custom = model.custom;
  if (custom && !custom.convergence) {
    return {
      id,
      required: true,
      status: 'skipped',
      message:
        'the custom strain block declares no `convergence` field (a smooth displacement and its body force); add one (formulation-format.md)'
    };
  }
  const p = degree;
  if (p < 1) {
    return {
      id,
      required: true,
      status: 'fail',
      theoretical: { l2: p + 1, energy: p },
      message: `the shape functions reproduce polynomials only to degree ${p} (completeness-degree): without linear completeness the element cannot converge`
    };
  }
  const theoretical = { l2: p + 1, energy: p };
  const { dim, nodes, ncomp, dofsPerNode: dpn } = model;
  const errorRule = ruleOfDegree(model.cellName, Math.max(2 * p + 2, model.rule.degree + 1));
  const errTab = await model.evaluator.tabulate(errorRule.points);
  const Q = errorRule.count;
  const field = model.kind ? manufacturedField(model.kind, model.material) : null;
  const D = await elasticity(model);
  const domain = convergenceDomain(model);
  const levels = LEVELS[dim];
  const series: SeriesPoint[] = [];
  const factor =
    model.kind === 'plane-stress' || model.kind === 'plane-strain'
      ? (model.options.thickness ?? 1)
      : model.kind === 'bar'
        ? (model.options.area ?? 1)
        : 1;

  for (let l = 0; l < levels.length; l++) {
    const mesh = macroPatchMesh(model.refNodes, model.cellName, refinePatch(domain, levels[l]));
    const sys = await meshSystem(model, ruleTab, mesh);
    const E = mesh.elementCount;
    // weights of the error rule points, × det J and the kind's factor (a custom block: its own weight)
    let X: Float64Array;
    const W = new Float64Array(E * Q);
    if (custom) {
      const pe = pointEnv(model, errTab, errorRule.points, sys.coords, E);
      X = pe.x;
      const w = await customWeight(model, pe);
      for (let t = 0; t < E * Q; t++) W[t] = w[t] * errorRule.weights[t % Q];
    } else {
      const g = pointGeometry(errTab, sys.coords, E, dim);
      X = g.x;
      const axisymmetric = model.kind === 'axisymmetric';
      for (let t = 0; t < E * Q; t++) {
        W[t] = g.detJ[t] * errorRule.weights[t % Q] * factor * (axisymmetric ? 2 * Math.PI * X[t * dim] : 1);
      }
    }

    // the exact field at the error points: body force, displacement and strain (one evaluation of the field per point)
    const b = new Float64Array(E * Q * dpn);
    const exactAtPoints = new Float64Array(E * Q * dpn);
    let epsX: Float64Array;
    if (field) {
      epsX = new Float64Array(E * Q * ncomp);
      const bq = new Float64Array(dpn);
      const uq = new Float64Array(dpn);
      const sq = new Float64Array(ncomp);
      for (let t = 0; t < E * Q; t++) {
        const x = X.subarray(t * dim, (t + 1) * dim);
        b.set(field.bodyForce(x, bq), t * dpn);
        exactAtPoints.set(field.displacement(x, uq), t * dpn);
        epsX.set(field.strain(x, sq), t * ncomp);
      }
    } else {
      b.set(await customField(model, 'convergence.body_force', X, E * Q));
      exactAtPoints.set(await customField(model, 'convergence.displacement', X, E * Q));
      epsX = await customStrainOfField(
        model,
        'convergence.displacement',
        errTab,
        errorRule.points,
        sys.coords,
        E
      );
    }

    // loads: f_i = Σ_q N_i(ξ_q) b(x_q) W_q, the body force integrated with the error rule
    const f = new Float64Array(sys.ndof);
    const fe = new Float64Array(sys.edof);
    for (let e = 0; e < E; e++) {
      fe.fill(0);
      for (let q = 0; q < Q; q++) {
        const t = e * Q + q;
        for (let i = 0; i < nodes; i++) {
          const ni = errTab.N[q * nodes + i] * W[t];
          for (let c = 0; c < dpn; c++) fe[i * dpn + c] += ni * b[t * dpn + c];
        }
      }
      assembleVector(sys.ndof, sys.dofMap.subarray(e * sys.edof, (e + 1) * sys.edof), fe, f);
    }

    // the exact displacement on the boundary
    const bn = mesh.boundary.nodes;
    const fixed = nodeDofs(bn, dpn);
    const values = new Float64Array(fixed.length);
    if (field) {
      const u = new Float64Array(dpn);
      bn.forEach((n, t) =>
        values.set(field.displacement(mesh.coords.subarray(n * dim, (n + 1) * dim), u), t * dpn)
      );
    } else {
      const bx = new Float64Array(bn.length * dim);
      bn.forEach((n, t) => bx.set(mesh.coords.subarray(n * dim, (n + 1) * dim), t * dim));
      values.set(await customField(model, 'convergence.displacement', bx, bn.length));
    }

    let u: Float64Array;
    const cells = Array(dim)
      .fill(levels[l] * COARSE_DIVISIONS)
      .join('×');
    try {
      u = solveWithDirichlet(sys.K, f, fixed, values).u;
    } catch (err) {
      return {
        id,
        required: true,
        status: 'error',
        theoretical,
        series,
        message: `the mesh of ${cells} cells cannot be solved (${(err as Error).message}); spurious zero-energy modes make assembled meshes singular`
      };
    }
    const ue = gather(sys, u);

    // L2 error
    let l2 = 0;
    for (let e = 0; e < E; e++) {
      for (let q = 0; q < Q; q++) {
        const t = e * Q + q;
        for (let c = 0; c < dpn; c++) {
          let uh = 0;
          for (let i = 0; i < nodes; i++) uh += errTab.N[q * nodes + i] * ue[e * sys.edof + i * dpn + c];
          const d = uh - exactAtPoints[t * dpn + c];
          l2 += d * d * W[t];
        }
      }
    }
    // energy error: (ε_h − ε)ᵀ D (ε_h − ε)
    const epsH = await strainBatch(model, errTab, errorRule.points, sys.coords, ue, E);
    let energy = 0;
    const d = new Float64Array(ncomp);
    const Dd = new Float64Array(ncomp);
    for (let t = 0; t < E * Q; t++) {
      for (let r = 0; r < ncomp; r++) d[r] = epsH[t * ncomp + r] - epsX[t * ncomp + r];
      multiplyInto(D, d, ncomp, ncomp, Dd);
      let s = 0;
      for (let r = 0; r < ncomp; r++) s += d[r] * Dd[r];
      energy += s * W[t];
    }
    series.push({
      h: 1 / (COARSE_DIVISIONS * levels[l]),
      dofs: sys.ndof,
      l2: Math.sqrt(Math.abs(l2)),
      energy: Math.sqrt(Math.abs(energy))
    });
    progress((l + 1) / levels.length);
  }

  const a = series[series.length - 2];
  const b = series[series.length - 1];
  const observed = { l2: observedOrder(a, b, 'l2'), energy: observedOrder(a, b, 'energy') };
  const okL2 = observed.l2 >= theoretical.l2 - RATE_MARGIN;
  const okEnergy = observed.energy >= theoretical.energy - RATE_MARGIN;
  const ok = okL2 && okEnergy;
  const divisions = levels.map((m) => m * COARSE_DIVISIONS);
  const meshes = `${divisions.map((n) => Array(dim).fill(n).join('×')).join(', ')} cells of a seeded, mildly distorted grid`;
  const fieldText = field ? field.description : 'the block’s declared convergence field';
  const lacking = [
    okL2 ? '' : `L2 order ${observed.l2.toFixed(2)} < ${theoretical.l2} − ${RATE_MARGIN}`,
    okEnergy ? '' : `energy order ${observed.energy.toFixed(2)} < ${theoretical.energy} − ${RATE_MARGIN}`
  ].filter(Boolean);
  return {
    id,
    required: true,
    status: ok ? 'pass' : 'fail',
    theoretical,
    observed,
    series,
    field: fieldText,
    errorRule: { degree: errorRule.degree, points: errorRule.count, source: errorRule.source },
    message: ok
      ? `${fieldText}; ${meshes}; orders from the last two meshes (Strang & Fix 1973)`
      : `${lacking.join('; ')} on the last two meshes (h = ${a.h.toPrecision(3)} → ${b.h.toPrecision(3)}); ${fieldText}; ${meshes}`
  };
}
