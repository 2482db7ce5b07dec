import { KernelError, requireFinite, requireInput } from './errors';

/** A matrix counts as symmetric when |A_ij − A_ji| ≤ this × max |A| (rounding of assembled sums; common practice, no source). */
export const SYMMETRY_TOLERANCE = 1e-10;

/** Components within this relative margin of the largest count as ties when fixing an eigenvector's sign (rounding only). */
const SIGN_TIE_TOLERANCE = 1e-12;

/** Implicit QL sweeps allowed per eigenvalue before giving up (EISPACK tql2 uses 30; convergence is cubic). */
const MAX_QL_ITERATIONS = 60;

/**
 * Eigenvalues (ascending) and orthonormal eigenvectors of a dense symmetric matrix A (n × n, row-major):
 * Householder tridiagonalisation and the implicit QL method (tred2/tql2 of EISPACK, Smith et al. 1976).
 * Column k of `vectors` is the eigenvector of values[k], signed so its largest component is positive.
 */
export function symmetricEigen(A: Float64Array, n: number): { values: Float64Array; vectors: Float64Array } {
  requireInput(Number.isInteger(n) && n >= 0, () => `matrix order must be a non-negative integer, got ${n}`);
  requireInput(A.length === n * n, () => `matrix has ${A.length} entries; ${n} × ${n} needed`);
  requireFinite(A, 'matrix');
  let amax = 0;
  for (let i = 0; i < n * n; i++) amax = Math.max(amax, Math.abs(A[i]));
  for (let i = 0; i < n; i++)
    for (let j = 0; j < i; j++) {
      if (Math.abs(A[i * n + j] - A[j * n + i]) > SYMMETRY_TOLERANCE * amax) {
        throw new KernelError(
          'not-symmetric',
          `the matrix is not symmetric: A[${i}][${j}] = ${A[i * n + j]}, A[${j}][${i}] = ${A[j * n + i]}`,
          {
            i,
            j
          }
        );
      }
    }
  const V = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) V[i * n + j] = 0.5 * (A[i * n + j] + A[j * n + i]);
  const d = new Float64Array(n);
  const e = new Float64Array(n);
  if (n === 0) return { values: d, vectors: V };
  tridiagonalise(V, n, d, e);
  implicitQL(V, n, d, e);
  // sort ascending (selection sort keeps it deterministic and stable enough for n ≤ a few hundred)
  for (let i = 0; i < n - 1; i++) {
    let k = i;
    let p = d[i];
    for (let j = i + 1; j < n; j++) if (d[j] < p) p = d[(k = j)];
    if (k !== i) {
      d[k] = d[i];
      d[i] = p;
      for (let r = 0; r < n; r++) {
        const t = V[r * n + i];
        V[r * n + i] = V[r * n + k];
        V[r * n + k] = t;
      }
    }
  }
  for (let k = 0; k < n; k++) {
    let big = 0;
    let at = 0;
    for (let r = 0; r < n; r++) {
      const a = Math.abs(V[r * n + k]);
      if (a > big * (1 + SIGN_TIE_TOLERANCE)) {
        big = a;
        at = r;
      }
    }
    if (V[at * n + k] < 0) for (let r = 0; r < n; r++) V[r * n + k] = -V[r * n + k];
  }
  return { values: d, vectors: V };
}

/** Householder reduction to tridiagonal form, accumulating the transformation in V (tred2). */
function tridiagonalise(V: Float64Array, n: number, d: Float64Array, e: Float64Array): void {
  for (let j = 0; j < n; j++) d[j] = V[(n - 1) * n + j];
  for (let i = n - 1; i > 0; i--) {
    let scale = 0;
    let h = 0;
    for (let k = 0; k < i; k++) scale += Math.abs(d[k]);
    if (scale === 0) {
      e[i] = d[i - 1];
      for (let j = 0; j < i; j++) {
        d[j] = V[(i - 1) * n + j];
        V[i * n + j] = 0;
        V[j * n + i] = 0;
      }
    } else {
      for (let k = 0; k < i; k++) {
        d[k] /= scale;
        h += d[k] * d[k];
      }
      let f = d[i - 1];
      let g = Math.sqrt(h);
      if (f > 0) g = -g;
      e[i] = scale * g;
      h -= f * g;
      d[i - 1] = f - g;
      for (let j = 0; j < i; j++) e[j] = 0;
      for (let j = 0; j < i; j++) {
        f = d[j];
        V[j * n + i] = f;
        g = e[j] + V[j * n + j] * f;
        for (let k = j + 1; k <= i - 1; k++) {
          g += V[k * n + j] * d[k];
          e[k] += V[k * n + j] * f;
        }
        e[j] = g;
      }
      f = 0;
      for (let j = 0; j < i; j++) {
        e[j] /= h;
        f += e[j] * d[j];
      }
      const hh = f / (h + h);
      for (let j = 0; j < i; j++) e[j] -= hh * d[j];
      for (let j = 0; j < i; j++) {
        f = d[j];
        g = e[j];
        for (let k = j; k <= i - 1; k++) V[k * n + j] -= f * e[k] + g * d[k];
        d[j] = V[(i - 1) * n + j];
        V[i * n + j] = 0;
      }
    }
    d[i] = h;
  }
  for (let i = 0; i < n - 1; i++) {
    V[(n - 1) * n + i] = V[i * n + i];
    V[i * n + i] = 1;
    const h = d[i + 1];
    if (h !== 0) {
      for (let k = 0; k <= i; k++) d[k] = V[k * n + i + 1] / h;
      for (let j = 0; j <= i; j++) {
        let g = 0;
        for (let k = 0; k <= i; k++) g += V[k * n + i + 1] * V[k * n + j];
        for (let k = 0; k <= i; k++) V[k * n + j] -= g * d[k];
      }
    }
    for (let k = 0; k <= i; k++) V[k * n + i + 1] = 0;
  }
  for (let j = 0; j < n; j++) {
    d[j] = V[(n - 1) * n + j];
    V[(n - 1) * n + j] = 0;
  }
  V[(n - 1) * n + n - 1] = 1;
  e[0] = 0;
}

/** Implicit QL iteration on the tridiagonal (d, e), rotating V (tql2). */
function implicitQL(V: Float64Array, n: number, d: Float64Array, e: Float64Array): void {
  for (let i = 1; i < n; i++) e[i - 1] = e[i];
  e[n - 1] = 0;
  let f = 0;
  let tst1 = 0;
  const eps = Number.EPSILON;
  for (let l = 0; l < n; l++) {
    tst1 = Math.max(tst1, Math.abs(d[l]) + Math.abs(e[l]));
    let m = l;
    while (m < n) {
      if (Math.abs(e[m]) <= eps * tst1) break;
      m++;
    }
    if (m > l) {
      let iter = 0;
      do {
        if (++iter > MAX_QL_ITERATIONS) {
          throw new KernelError(
            'no-convergence',
            `the symmetric eigensolver did not converge for eigenvalue ${l}`,
            { index: l }
          );
        }
        let g = d[l];
        let p = (d[l + 1] - g) / (2 * e[l]);
        let r = Math.hypot(p, 1);
        if (p < 0) r = -r;
        d[l] = e[l] / (p + r);
        d[l + 1] = e[l] * (p + r);
        const dl1 = d[l + 1];
        let h = g - d[l];
        for (let i = l + 2; i < n; i++) d[i] -= h;
        f += h;
        p = d[m];
        let c = 1;
        let c2 = c;
        let c3 = c;
        const el1 = e[l + 1];
        let s = 0;
        let s2 = 0;
        for (let i = m - 1; i >= l; i--) {
          c3 = c2;
          c2 = c;
          s2 = s;
          g = c * e[i];
          h = c * p;
          r = Math.hypot(p, e[i]);
          e[i + 1] = s * r;
          s = e[i] / r;
          c = p / r;
          p = c * d[i] - s * g;
          d[i + 1] = h + s * (c * g + s * d[i]);
          for (let k = 0; k < n; k++) {
            const vk = k * n;
            h = V[vk + i + 1];
            V[vk + i + 1] = s * V[vk + i] + c * h;
            V[vk + i] = c * V[vk + i] - s * h;
          }
        }
        p = (-s * s2 * c3 * el1 * e[l]) / dl1;
        e[l] = s * p;
        d[l] = c * p;
      } while (Math.abs(e[l]) > eps * tst1);
    }
    d[l] += f;
    e[l] = 0;
  }
}
