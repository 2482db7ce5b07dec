/**
 * Point sets on the reference cell and their tabulation: every set a stage needs is tabulated in
 * one sandbox call and then split, so an isoparametric element pays for its shape functions once.
 */
import { type FacetQuadrature, type Tabulation, facetQuadrature } from '@isoledger/kernel';
import { facetRuleDegree } from './tolerances';
import type { ElementModel } from './model';

/** Tabulates several named point sets (each count × dim) in one call and splits the result per set. */
export async function tabulateSets(
  model: ElementModel,
  sets: Record<string, Float64Array>
): Promise<Record<string, Tabulation>> {
  const dim = model.dim;
  const names = Object.keys(sets);
  let total = 0;
  for (const n of names) total += sets[n].length / dim;
  const all = new Float64Array(total * dim);
  let at = 0;
  for (const n of names) {
    all.set(sets[n], at * dim);
    at += sets[n].length / dim;
  }
  const tab = await model.evaluator.tabulate(all);
  const out: Record<string, Tabulation> = {};
  at = 0;
  for (const n of names) {
    const count = sets[n].length / dim;
    out[n] = sliceTabulation(tab, at, count);
    at += count;
  }
  return out;
}

/** Points [from, from + count) of a tabulation. */
export function sliceTabulation(tab: Tabulation, from: number, count: number): Tabulation {
  const { nodes, dim } = tab;
  return {
    nodes,
    dim,
    points: count,
    N: tab.N.slice(from * nodes, (from + count) * nodes),
    dN: tab.dN.slice(from * nodes * dim, (from + count) * nodes * dim)
  };
}

/** mulberry32: a seeded generator so sampled points are the same bits in every run. */
export function seeded(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** The facet rules of the boundary loads, one per facet of the reference cell. */
export function facetRules(model: ElementModel): FacetQuadrature[] {
  const degree = facetRuleDegree(model.rule.degree);
  return model.cell.facets.map((_, f) => facetQuadrature(model.cellName, f, degree));
}

/** Name of facet f's point set in the shared tabulation. */
export const facetSet = (f: number) => `facet ${f}`;
