/** §1 of verification.md: shape-function checks on the reference cell, no geometry. */
import { type Tabulation, exponentsOfDegree, facetNormal, facetQuadrature } from '@isoledger/kernel';
import type { ElementModel } from './model';
import type { CheckResult } from './record';
import { seeded } from './reference';
import {
  COMPLETENESS_TOLERANCE,
  FACET_SAMPLES,
  FACET_SEED,
  INTERIOR_SAMPLES,
  INTERIOR_SEED,
  MAX_COMPLETENESS_DEGREE,
  ON_FACET_TOLERANCE,
  SHAPE_TOLERANCE
} from './tolerances';

export interface ShapePoints {
  sets: Record<string, Float64Array>;
  /** facet of each point of the 'facets' set */
  facetOf: Int32Array;
  /** natural coordinates of each set, kept for messages and monomials */
  interior: Float64Array;
}

/** The reference point sets of the shape checks: nodes, the stiffness rule, seeded interior points, points on every facet. */
export function shapePoints(model: ElementModel): ShapePoints {
  const { cell, dim } = model;
  const interior = cell.sampleInterior(INTERIOR_SAMPLES, INTERIOR_SEED);
  const facetPts: number[] = [];
  const facetOf: number[] = [];
  const rnd = seeded(FACET_SEED);
  cell.facets.forEach((verts, f) => {
    const V = verts.map((v) => Array.from(cell.vertices.subarray(v * dim, (v + 1) * dim)));
    const push = (p: number[]) => {
      facetPts.push(...p);
      facetOf.push(f);
    };
    V.forEach(push);
    const centre = V[0].map((_, k) => V.reduce((s, v) => s + v[k], 0) / V.length);
    push(centre);
    if (dim > 1) {
      const fq = facetQuadrature(model.cellName, f, 4);
      for (let q = 0; q < fq.count; q++) push(Array.from(fq.points.subarray(q * dim, (q + 1) * dim)));
      for (let s = 0; s < FACET_SAMPLES; s++) {
        // a random convex combination of the facet's vertices: on the facet for simplices and (bilinear) for squares
        let w: number[];
        if (V.length === 4) {
          const a = rnd();
          const b = rnd();
          w = [(1 - a) * (1 - b), a * (1 - b), a * b, (1 - a) * b];
        } else {
          const r = V.map(() => -Math.log(1 - rnd() * 0.999999));
          const t = r.reduce((x, y) => x + y, 0);
          w = r.map((x) => x / t);
        }
        push(V[0].map((_, k) => V.reduce((sum, v, i) => sum + w[i] * v[k], 0)));
      }
    }
  });
  return {
    sets: { nodes: model.refNodes, rule: model.rule.points, interior, facets: Float64Array.from(facetPts) },
    facetOf: Int32Array.from(facetOf),
    interior
  };
}

const fmtPoint = (p: ArrayLike<number>) => `(${Array.from(p, (v) => +v.toPrecision(6)).join(', ')})`;

interface Worst {
  value: number;
  where: string;
}

function worse(w: Worst, value: number, where: () => string): void {
  if (!(value <= w.value)) {
    // NaN counts as worst
    w.value = value;
    w.where = where();
  }
}

/** Concatenates tabulations of the same element (points stacked). */
function stack(...tabs: { tab: Tabulation; pts: Float64Array }[]): { tab: Tabulation; pts: Float64Array } {
  const nodes = tabs[0].tab.nodes;
  const dim = tabs[0].tab.dim;
  const points = tabs.reduce((s, t) => s + t.tab.points, 0);
  const N = new Float64Array(points * nodes);
  const dN = new Float64Array(points * nodes * dim);
  const pts = new Float64Array(points * dim);
  let at = 0;
  for (const t of tabs) {
    N.set(t.tab.N, at * nodes);
    dN.set(t.tab.dN, at * nodes * dim);
    pts.set(t.pts, at * dim);
    at += t.tab.points;
  }
  return { tab: { nodes, dim, points, N, dN }, pts };
}

export interface ShapeOutcome {
  checks: CheckResult[];
  /** completeness degree p (−1 when not even constants are reproduced) */
  degree: number;
}

/** kronecker-delta, partition-of-unity, linear-completeness, completeness-degree, face-conformity. */
export function shapeChecks(
  model: ElementModel,
  tabs: Record<string, Tabulation>,
  sp: ShapePoints
): ShapeOutcome {
  const { nodes: n, dim, refNodes } = model;
  const coordNames = model.def.coordinates;
  const checks: CheckResult[] = [];

  // kronecker-delta: N_i(ξ_j) = δ_ij
  {
    const t = tabs.nodes;
    const w: Worst = { value: 0, where: '' };
    for (let j = 0; j < n; j++) {
      for (let i = 0; i < n; i++) {
        const dev = Math.abs(t.N[j * n + i] - (i === j ? 1 : 0));
        worse(
          w,
          dev,
          () =>
            `N${i + 1} = ${t.N[j * n + i]} at node ${j + 1} ${fmtPoint(refNodes.subarray(j * dim, (j + 1) * dim))}`
        );
      }
    }
    checks.push(result('kronecker-delta', w, SHAPE_TOLERANCE, 'Nᵢ(ξⱼ) ≠ δᵢⱼ'));
  }

  const inner = stack(
    { tab: tabs.rule, pts: sp.sets.rule },
    { tab: tabs.interior, pts: sp.sets.interior },
    { tab: tabs.nodes, pts: sp.sets.nodes }
  );
  const T = inner.tab;
  const at = (q: number) => fmtPoint(inner.pts.subarray(q * dim, (q + 1) * dim));

  // partition-of-unity: Σ N_i = 1 at quadrature, random interior points and the nodes
  {
    const w: Worst = { value: 0, where: '' };
    for (let q = 0; q < T.points; q++) {
      let s = 0;
      for (let i = 0; i < n; i++) s += T.N[q * n + i];
      worse(w, Math.abs(s - 1), () => `Σ N = ${s} at ξ = ${at(q)}`);
    }
    checks.push(
      result(
        'partition-of-unity',
        w,
        SHAPE_TOLERANCE,
        'the functions do not sum to 1: a rigid translation is not reproduced'
      )
    );
  }

  // linear-completeness: Σ N_i ξ_i = ξ, Σ ∂N_i/∂ξ_k = 0 and Σ ∂N_i/∂ξ_k ξ_i,l = δ_kl
  {
    const w: Worst = { value: 0, where: '' };
    for (let q = 0; q < T.points; q++) {
      for (let l = 0; l < dim; l++) {
        let s = 0;
        for (let i = 0; i < n; i++) s += T.N[q * n + i] * refNodes[i * dim + l];
        const xi = inner.pts[q * dim + l];
        worse(
          w,
          Math.abs(s - xi),
          () => `Σ Nᵢ ${coordNames[l]}ᵢ = ${s} where ${coordNames[l]} = ${xi}, at ξ = ${at(q)}`
        );
      }
      for (let k = 0; k < dim; k++) {
        let s0 = 0;
        for (let i = 0; i < n; i++) s0 += T.dN[(q * n + i) * dim + k];
        worse(w, Math.abs(s0), () => `Σ ∂Nᵢ/∂${coordNames[k]} = ${s0} at ξ = ${at(q)}`);
        for (let l = 0; l < dim; l++) {
          let s1 = 0;
          for (let i = 0; i < n; i++) s1 += T.dN[(q * n + i) * dim + k] * refNodes[i * dim + l];
          const exact = k === l ? 1 : 0;
          worse(
            w,
            Math.abs(s1 - exact),
            () => `Σ ∂Nᵢ/∂${coordNames[k]} ${coordNames[l]}ᵢ = ${s1}, not ${exact}, at ξ = ${at(q)}`
          );
        }
      }
    }
    checks.push(
      result(
        'linear-completeness',
        w,
        SHAPE_TOLERANCE,
        'a linear field is not reproduced: constant strain is out of reach'
      )
    );
  }

  // completeness-degree: largest p with every monomial of total degree ≤ p reproduced
  let degree = -1;
  let firstMissing = '';
  for (let d = 0; d <= MAX_COMPLETENESS_DEGREE; d++) {
    const monomials = exponentsOfDegree(dim, d);
    let ok = true;
    for (const e of monomials) {
      for (let q = 0; q < T.points && ok; q++) {
        let s = 0;
        for (let i = 0; i < n; i++) s += T.N[q * n + i] * monomial(refNodes, i * dim, e);
        if (!(Math.abs(s - monomial(inner.pts, q * dim, e)) <= COMPLETENESS_TOLERANCE)) ok = false;
      }
      if (!ok) {
        firstMissing =
          e
            .map((p, k) => (p === 0 ? '' : p === 1 ? coordNames[k] : `${coordNames[k]}^${p}`))
            .filter(Boolean)
            .join(' ') || '1';
        break;
      }
    }
    if (!ok) break;
    degree = d;
  }
  checks.push({
    id: 'completeness-degree',
    required: false,
    status: 'pass',
    metric: degree,
    message:
      degree < 0
        ? 'not even constants are reproduced'
        : `every monomial of total degree ≤ ${degree} is reproduced${firstMissing ? `; ${firstMissing} is not` : ''}`
  });

  // face-conformity: functions of nodes off a facet vanish on it
  {
    const cell = model.cell;
    const onFacet: boolean[][] = cell.facets.map((verts, f) => {
      const normal = facetNormal(cell, f);
      let c = 0;
      for (let k = 0; k < dim; k++) c += normal[k] * cell.vertices[verts[0] * dim + k];
      return Array.from({ length: n }, (_, i) => {
        let s = 0;
        for (let k = 0; k < dim; k++) s += normal[k] * refNodes[i * dim + k];
        return Math.abs(s - c) <= ON_FACET_TOLERANCE;
      });
    });
    const t = tabs.facets;
    const w: Worst = { value: 0, where: '' };
    for (let q = 0; q < t.points; q++) {
      const f = sp.facetOf[q];
      for (let i = 0; i < n; i++) {
        if (onFacet[f][i]) continue;
        const v = Math.abs(t.N[q * n + i]);
        worse(
          w,
          v,
          () =>
            `N${i + 1} = ${t.N[q * n + i]} on facet ${f + 1} (vertices ${cell.facets[f].map((v) => v + 1).join(', ')}) at ξ = ${fmtPoint(sp.sets.facets.subarray(q * dim, (q + 1) * dim))}, though node ${i + 1} is not on it`
        );
      }
    }
    const r = result(
      'face-conformity',
      w,
      SHAPE_TOLERANCE,
      'neighbouring elements would not join continuously'
    );
    r.nodesOnFacets = onFacet.map((row) => row.flatMap((on, i) => (on ? [i + 1] : [])));
    checks.push(r);
  }
  return { checks, degree };
}

function monomial(p: ArrayLike<number>, offset: number, e: number[]): number {
  let m = 1;
  for (let k = 0; k < e.length; k++) for (let j = 0; j < e[k]; j++) m *= p[offset + k];
  return m;
}

function result(id: string, w: Worst, tolerance: number, meaning: string): CheckResult {
  const pass = w.value <= tolerance;
  return {
    id,
    required: true,
    status: pass ? 'pass' : 'fail',
    metric: w.value,
    tolerance,
    ...(pass ? {} : { message: `${meaning} (worst deviation ${w.value.toPrecision(3)}: ${w.where})` })
  };
}
