// The manufactured solutions of the convergence check: the body force derived by hand must equal
// −div σ computed numerically from the field (central differences of the stresses). The equilibrium
// equations are those of linear elasticity in Cartesian and, for the axisymmetric kind, cylindrical
// coordinates (Timoshenko & Goodier, Theory of Elasticity, 3rd ed. 1970, §1.7 and §13.1).
import { describe, expect, it } from 'vitest';
import { type StrainKind, elasticityMatrix, seededUniform, strainComponents } from '@isoledger/kernel';
import { manufacturedField } from '../../../packages/verify/src/manufactured';

/** Central-difference step and the agreement expected: truncation h² ~ 1e-8 relative (common practice, no source). */
const H = 1e-4;
const FD_TOLERANCE = 1e-6;

const material = { E: 7, nu: 0.3 };

/** Stress vector of the kind at x, from the field's own gradient and the kernel's D. */
function stress(kind: StrainKind, x: number[]): Float64Array {
  const field = manufacturedField(kind, material);
  const n = strainComponents(kind);
  const D = elasticityMatrix(kind, material);
  const eps = field.strain(x, new Float64Array(n));
  const s = new Float64Array(n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) s[i] += D[i * n + j] * eps[j];
  return s;
}

/** ∂σ_c/∂x_k by central differences. */
function dStress(kind: StrainKind, x: number[], c: number, k: number): number {
  const a = x.slice();
  const b = x.slice();
  a[k] += H;
  b[k] -= H;
  return (stress(kind, a)[c] - stress(kind, b)[c]) / (2 * H);
}

/** −div σ by finite differences, per kind (components in the kernel's order). */
function divergence(kind: StrainKind, x: number[]): number[] {
  const d = (c: number, k: number) => dStress(kind, x, c, k);
  switch (kind) {
    case 'bar':
      return [-d(0, 0)];
    case 'plane-stress':
    case 'plane-strain':
      // σx, σy, τxy
      return [-(d(0, 0) + d(2, 1)), -(d(2, 0) + d(1, 1))];
    case 'axisymmetric': {
      // σr, σz, σθ, τrz: ∂σr/∂r + ∂τ/∂z + (σr − σθ)/r, ∂τ/∂r + ∂σz/∂z + τ/r
      const s = stress(kind, x);
      const r = x[0];
      return [-(d(0, 0) + d(3, 1) + (s[0] - s[2]) / r), -(d(3, 0) + d(1, 1) + s[3] / r)];
    }
    case 'solid':
      // σx, σy, σz, τxy, τyz, τzx
      return [-(d(0, 0) + d(3, 1) + d(5, 2)), -(d(3, 0) + d(1, 1) + d(4, 2)), -(d(5, 0) + d(4, 1) + d(2, 2))];
  }
}

const KINDS: StrainKind[] = ['bar', 'plane-stress', 'plane-strain', 'axisymmetric', 'solid'];

describe('manufactured fields of the convergence check', () => {
  for (const kind of KINDS) {
    it(`${kind}: the hand-derived body force equals −div σ by central differences (Timoshenko & Goodier equilibrium equations)`, () => {
      const field = manufacturedField(kind, material);
      const rnd = seededUniform(11);
      for (let t = 0; t < 20; t++) {
        const x = field.domain.map(([lo, hi]) => lo + (hi - lo) * (0.05 + 0.9 * rnd()));
        const b = field.bodyForce(x, new Float64Array(field.components));
        const fd = divergence(kind, x);
        const scale = Math.max(...fd.map(Math.abs), 1e-300);
        for (let c = 0; c < field.components; c++)
          expect(Math.abs(b[c] - fd[c]) / scale).toBeLessThan(FD_TOLERANCE);
      }
    });

    it(`${kind}: the gradient equals central differences of the displacement`, () => {
      const field = manufacturedField(kind, material);
      const rnd = seededUniform(5);
      const dim = field.dim;
      for (let t = 0; t < 10; t++) {
        const x = field.domain.map(([lo, hi]) => lo + (hi - lo) * rnd());
        const G = field.gradient(x, new Float64Array(field.components * dim));
        for (let k = 0; k < dim; k++) {
          const a = x.slice();
          const b = x.slice();
          a[k] += H;
          b[k] -= H;
          const ua = field.displacement(a, new Float64Array(field.components));
          const ub = field.displacement(b, new Float64Array(field.components));
          for (let c = 0; c < field.components; c++)
            expect(Math.abs(G[c * dim + k] - (ua[c] - ub[c]) / (2 * H))).toBeLessThan(FD_TOLERANCE);
        }
      }
    });
  }

  it('is not a polynomial an element could reproduce exactly: the field has non-zero second derivatives', () => {
    const field = manufacturedField('plane-stress', material);
    const b = field.bodyForce([0.3, 0.6], new Float64Array(2));
    expect(Math.abs(b[0]) + Math.abs(b[1])).toBeGreaterThan(1);
  });
});
