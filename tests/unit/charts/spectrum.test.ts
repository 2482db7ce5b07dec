import { describe, expect, it } from 'vitest';
import { eigs, matrix } from 'mathjs';
import {
  classifySpectrum,
  NEGATIVE_EIGENVALUE_RATIO,
  SPECTRUM_FLOOR,
  ZERO_EIGENVALUE_RATIO
} from '../../../src/lib/components/charts/spectrum';

/** Stiffness of a free chain of unit springs between consecutive nodes; `cut` removes one spring. */
function springChain(nodes: number, cut = -1): number[][] {
  const K = Array.from({ length: nodes }, () => new Array<number>(nodes).fill(0));
  for (let e = 0; e < nodes - 1; e++) {
    if (e === cut) continue;
    K[e][e] += 1;
    K[e + 1][e + 1] += 1;
    K[e][e + 1] -= 1;
    K[e + 1][e] -= 1;
  }
  return K;
}

function eigenvalues(K: number[][]): number[] {
  return (eigs(matrix(K)).values as unknown as { toArray(): number[] }).toArray();
}

describe('spectrum classification', () => {
  it('uses the thresholds of the contract: zero ≤ 1e-8 λmax, negative < −1e-10 λmax (verification.md §2)', () => {
    expect(ZERO_EIGENVALUE_RATIO).toBe(1e-8);
    expect(NEGATIVE_EIGENVALUE_RATIO).toBe(1e-10);
  });

  it('finds the one rigid translation of a free spring chain, eigenvalues by mathjs eigs', () => {
    // A free chain has exactly one zero eigenvalue, the rigid translation (hand derivation: K·1 = 0, K connected).
    const s = classifySpectrum(eigenvalues(springChain(6)), 1);
    expect(s.points).toHaveLength(6);
    expect(s.zeroCount).toBe(1);
    expect(s.points.filter((p) => p.spurious)).toHaveLength(0);
    // largest eigenvalue of the free chain of n unit springs: 2 − 2 cos((n−1)π/n) (Strang, Linear Algebra, from memory)
    expect(s.lambdaMax).toBeCloseTo(2 - 2 * Math.cos((5 * Math.PI) / 6), 10);
  });

  it('marks the zero beyond the expected count as spurious when the chain falls apart', () => {
    const s = classifySpectrum(eigenvalues(springChain(6, 2)), 1);
    expect(s.zeroCount).toBe(2);
    const spurious = s.points.filter((p) => p.spurious);
    expect(spurious).toHaveLength(1);
    expect(spurious[0].index).toBe(2);
  });

  it('sorts ascending, draws computed zeros on the floor and tells negatives apart', () => {
    const s = classifySpectrum([4, -1e-17, 1, -0.5, 2e-16], 1);
    expect(s.points.map((p) => p.value)).toEqual([-0.5, -1e-17, 2e-16, 1, 4]);
    expect(s.points.map((p) => p.kind)).toEqual(['negative', 'zero', 'zero', 'positive', 'positive']);
    expect(s.negativeCount).toBe(1);
    expect(s.points[1].drawn).toBe(SPECTRUM_FLOOR);
    expect(s.points[0].drawn).toBeCloseTo(0.125, 15);
    expect(s.points[4].drawn).toBe(1);
  });
});
