/** Strains and tractions of the built-in kinds from a displacement field, in the kernel's component order. */
import type { StrainKind } from '@isoledger/kernel';

/**
 * ε from u, ∇u (G[c·dim + k] = ∂u_c/∂x_k) and x: bar εx; plane εx, εy, γxy; axisymmetric
 * εr, εz, εθ = u/r, γrz; solid εx, εy, εz, γxy, γyz, γzx (engineering shears).
 */
export function strainOf(
  kind: StrainKind,
  u: ArrayLike<number>,
  G: ArrayLike<number>,
  x: ArrayLike<number>,
  out: Float64Array
): Float64Array {
  switch (kind) {
    case 'bar':
      out[0] = G[0];
      break;
    case 'plane-stress':
    case 'plane-strain':
      out[0] = G[0];
      out[1] = G[3];
      out[2] = G[1] + G[2];
      break;
    case 'axisymmetric':
      out[0] = G[0];
      out[1] = G[3];
      out[2] = u[0] / x[0];
      out[3] = G[1] + G[2];
      break;
    case 'solid':
      out[0] = G[0];
      out[1] = G[4];
      out[2] = G[8];
      out[3] = G[1] + G[3];
      out[4] = G[5] + G[7];
      out[5] = G[6] + G[2];
      break;
  }
  return out;
}

/** t = σ n on a boundary with outward unit normal n, from the stress vector σ of the kind (axisymmetric: the r–z components). */
export function tractionOf(
  kind: StrainKind,
  s: ArrayLike<number>,
  n: ArrayLike<number>,
  out: Float64Array
): Float64Array {
  switch (kind) {
    case 'bar':
      out[0] = s[0] * n[0];
      break;
    case 'plane-stress':
    case 'plane-strain':
      out[0] = s[0] * n[0] + s[2] * n[1];
      out[1] = s[2] * n[0] + s[1] * n[1];
      break;
    case 'axisymmetric':
      // σr, σz, σθ, τrz
      out[0] = s[0] * n[0] + s[3] * n[1];
      out[1] = s[3] * n[0] + s[1] * n[1];
      break;
    case 'solid':
      // σx, σy, σz, τxy, τyz, τzx
      out[0] = s[0] * n[0] + s[3] * n[1] + s[5] * n[2];
      out[1] = s[3] * n[0] + s[1] * n[1] + s[4] * n[2];
      out[2] = s[5] * n[0] + s[4] * n[1] + s[2] * n[2];
      break;
  }
  return out;
}

/** y = A x for a row-major n × m matrix. */
export function multiplyInto(
  A: ArrayLike<number>,
  x: ArrayLike<number>,
  n: number,
  m: number,
  out: Float64Array,
  offset = 0
): Float64Array {
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < m; j++) s += A[i * m + j] * x[offset + j];
    out[i] = s;
  }
  return out;
}
