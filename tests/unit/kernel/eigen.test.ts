import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { eigs } from 'mathjs';
import {
  KernelError,
  type StrainKind,
  elementStiffness,
  gaussRule,
  rigidBodyModeCount,
  seededUniform,
  simplexRule,
  symmetricEigen
} from '../../../packages/kernel/src/index';
import { BAR2, HEX8, Q4, T3, T4, tabulate } from './fixtures';

/** Zero eigenvalue: λ ≤ 1e-8 λmax (verification.md, zero-energy-modes). */
const ZERO_EIGENVALUE = 1e-8;
/** Agreement with the reference library: both are backward stable, so eigenvalues agree to ~1e-13 ‖A‖. */
const EIGEN_TOLERANCE = 1e-10;

function randomSymmetric(n: number, seed: number): Float64Array {
  const rnd = seededUniform(seed);
  const A = new Float64Array(n * n);
  for (let i = 0; i < n; i++)
    for (let j = 0; j <= i; j++) {
      const v = 2 * rnd() - 1;
      A[i * n + j] = v;
      A[j * n + i] = v;
    }
  return A;
}

describe('dense symmetric eigensolver', () => {
  it('agrees with mathjs eigs on seeded random symmetric matrices (values, and vectors up to sign)', () => {
    for (const [n, seed] of [
      [1, 1],
      [2, 2],
      [5, 3],
      [12, 4],
      [30, 5],
      [60, 6]
    ]) {
      const A = randomSymmetric(n, seed);
      const ours = symmetricEigen(A, n);
      const rows = Array.from({ length: n }, (_, i) => Array.from(A.subarray(i * n, (i + 1) * n)));
      const ref = eigs(rows) as unknown as {
        values: number[];
        eigenvectors: { value: number; vector: number[] }[];
      };
      const values = Array.from(ref.values as number[]).sort((a, b) => a - b);
      for (let k = 0; k < n; k++)
        expect(Math.abs(ours.values[k] - values[k]), `n = ${n}, λ${k}`).toBeLessThan(EIGEN_TOLERANCE);
      // random spectra are simple: each eigenvector is unique up to sign
      for (const { value, vector } of ref.eigenvectors) {
        const k = ours.values.findIndex((v) => Math.abs(v - value) < 1e-9);
        const norm = Math.hypot(...vector);
        let dot = 0;
        for (let i = 0; i < n; i++) dot += (ours.vectors[i * n + k] * vector[i]) / norm;
        expect(Math.abs(Math.abs(dot) - 1), `n = ${n}, vector ${k}`).toBeLessThan(1e-9);
      }
    }
  });

  it('returns ascending values and an orthonormal eigenbasis: A V = V Λ, Vᵀ V = I', () => {
    const n = 40;
    const A = randomSymmetric(n, 77);
    const { values, vectors: V } = symmetricEigen(A, n);
    for (let k = 1; k < n; k++) expect(values[k]).toBeGreaterThanOrEqual(values[k - 1]);
    for (let k = 0; k < n; k++) {
      for (let i = 0; i < n; i++) {
        let s = 0;
        for (let j = 0; j < n; j++) s += A[i * n + j] * V[j * n + k];
        expect(Math.abs(s - values[k] * V[i * n + k])).toBeLessThan(1e-12);
      }
      for (let l = 0; l < n; l++) {
        let s = 0;
        for (let i = 0; i < n; i++) s += V[i * n + k] * V[i * n + l];
        expect(Math.abs(s - (k === l ? 1 : 0))).toBeLessThan(1e-12);
      }
    }
  });

  it('handles repeated eigenvalues: the identity and a diagonal matrix', () => {
    const I = new Float64Array(9);
    I[0] = I[4] = I[8] = 1;
    expect(Array.from(symmetricEigen(I, 3).values)).toEqual([1, 1, 1]);
    const D = Float64Array.of(3, 0, 0, 0, -1, 0, 0, 0, 2);
    expect(Array.from(symmetricEigen(D, 3).values)).toEqual([-1, 2, 3]);
  });

  it('rejects a non-symmetric matrix, naming the entry', () => {
    expect(() => symmetricEigen(Float64Array.of(1, 2, 3, 4), 2)).toThrow(KernelError);
    expect(() => symmetricEigen(Float64Array.of(1, 2, 3, 4), 2)).toThrow(/A\[1\]\[0\] = 3/);
    expect(() => symmetricEigen(Float64Array.of(1, 2, 3), 2)).toThrow(/3 entries; 2 × 2/);
  });
});

describe('element spectra', () => {
  const zeroCount = (K: Float64Array) => {
    const n = Math.round(Math.sqrt(K.length));
    const { values } = symmetricEigen(K, n);
    const max = values[n - 1];
    expect(values[0]).toBeGreaterThan(-1e-10 * max);
    return values.filter((v) => v <= ZERO_EIGENVALUE * max).length;
  };
  const material = { E: 1, nu: 0.3 };
  const square = Float64Array.of(0, 0, 1, 0, 1.2, 0.9, -0.1, 1.1);
  const cube = Float64Array.from(HEX8.nodes, (v, i) => (v + 1) / 2 + 0.05 * Math.cos(i));

  it('have exactly the rigid-body zero modes with full integration (Q4 2×2: 3, T3: 3, Hex8 2×2×2: 6, T4: 6, bar: 1, axisymmetric Q4: 1)', () => {
    const cases: [StrainKind, Float64Array][] = [
      [
        'plane-stress',
        elementStiffness(
          'plane-stress',
          tabulate(Q4, gaussRule('quadrilateral', 2).points),
          gaussRule('quadrilateral', 2).weights,
          square,
          material
        )
      ],
      [
        'plane-strain',
        elementStiffness(
          'plane-strain',
          tabulate(T3, simplexRule('triangle', 1).points),
          simplexRule('triangle', 1).weights,
          Float64Array.of(0, 0, 2, 0.3, 0.4, 1),
          material
        )
      ],
      [
        'solid',
        elementStiffness(
          'solid',
          tabulate(HEX8, gaussRule('hexahedron', 2).points),
          gaussRule('hexahedron', 2).weights,
          cube,
          material
        )
      ],
      [
        'solid',
        elementStiffness(
          'solid',
          tabulate(T4, simplexRule('tetrahedron', 1).points),
          simplexRule('tetrahedron', 1).weights,
          Float64Array.of(0, 0, 0, 1, 0, 0.1, 0.2, 1, 0, 0.1, 0.3, 1),
          material
        )
      ],
      [
        'bar',
        elementStiffness(
          'bar',
          tabulate(BAR2, gaussRule('interval', 1).points),
          gaussRule('interval', 1).weights,
          Float64Array.of(0, 2),
          material
        )
      ],
      [
        'axisymmetric',
        elementStiffness(
          'axisymmetric',
          tabulate(Q4, gaussRule('quadrilateral', 2).points),
          gaussRule('quadrilateral', 2).weights,
          Float64Array.from(square, (v, i) => (i % 2 ? v : v + 1)),
          material
        )
      ]
    ];
    for (const [kind, K] of cases) expect(zeroCount(K), kind).toBe(rigidBodyModeCount(kind));
  });

  it('show the hourglass modes of one-point integration: Q4 has 2 spurious modes, Hex8 has 12 (Flanagan & Belytschko 1981)', () => {
    const q1 = gaussRule('quadrilateral', 1);
    expect(
      zeroCount(elementStiffness('plane-stress', tabulate(Q4, q1.points), q1.weights, square, material))
    ).toBe(3 + 2);
    const h1 = gaussRule('hexahedron', 1);
    expect(zeroCount(elementStiffness('solid', tabulate(HEX8, h1.points), h1.weights, cube, material))).toBe(
      6 + 12
    );
  });

  it('is frame invariant: any rotation and translation of a Q4 or Hex8 leaves its spectrum unchanged (property)', () => {
    const q2 = gaussRule('quadrilateral', 2);
    const h2 = gaussRule('hexahedron', 2);
    const spectrum = (K: Float64Array) => symmetricEigen(K, Math.round(Math.sqrt(K.length))).values;
    const base2 = spectrum(
      elementStiffness('plane-stress', tabulate(Q4, q2.points), q2.weights, square, material)
    );
    const base3 = spectrum(elementStiffness('solid', tabulate(HEX8, h2.points), h2.weights, cube, material));
    fc.assert(
      fc.property(
        fc.double({ min: -Math.PI, max: Math.PI, noNaN: true }),
        fc.double({ min: -1, max: 1, noNaN: true }),
        fc.double({ min: -Math.PI / 2, max: Math.PI / 2, noNaN: true }),
        fc.double({ min: -10, max: 10, noNaN: true }),
        (a, b, c, shift) => {
          // plane: rotation by a; solid: rotation about z by a, then about x by c, with a shift
          const ca = Math.cos(a);
          const sa = Math.sin(a);
          const x2 = Float64Array.from(
            square,
            (_v, i) =>
              (i % 2 === 0 ? ca * square[i] - sa * square[i + 1] : sa * square[i - 1] + ca * square[i]) +
              shift
          );
          const s2 = spectrum(
            elementStiffness('plane-stress', tabulate(Q4, q2.points), q2.weights, x2, material)
          );
          const cc = Math.cos(c);
          const sc = Math.sin(c);
          const x3 = new Float64Array(24);
          for (let i = 0; i < 8; i++) {
            const [x, y, z] = [cube[3 * i], cube[3 * i + 1], cube[3 * i + 2]];
            const [x1, y1] = [ca * x - sa * y, sa * x + ca * y];
            x3.set([x1 + shift, cc * y1 - sc * z + b, sc * y1 + cc * z], 3 * i);
          }
          const s3 = spectrum(elementStiffness('solid', tabulate(HEX8, h2.points), h2.weights, x3, material));
          for (let k = 0; k < base2.length; k++)
            expect(Math.abs(s2[k] - base2[k])).toBeLessThan(1e-10 * base2[base2.length - 1]);
          for (let k = 0; k < base3.length; k++)
            expect(Math.abs(s3[k] - base3[k])).toBeLessThan(1e-10 * base3[base3.length - 1]);
        }
      ),
      { numRuns: 40, seed: 2024 }
    );
  });
});
