/**
 * Manufactured solutions for the convergence check of the built-in strain kinds: a smooth
 * displacement field of our own, its gradient, and the body force b = −div σ that makes it an exact
 * solution of linear elasticity. Each component is a product of one-dimensional functions, so every
 * derivative below follows from the product rule; the equilibrium equations are written out per kind.
 */
import type { Material, StrainKind } from '@isoledger/kernel';
import { strainOf } from './kinematics';

/** f(t), f′(t), f″(t) of one factor. */
type Factor = (t: number, out: Float64Array, at: number) => void;

const sine =
  (a: number): Factor =>
  (t, o, i) => {
    const s = Math.sin(a * t);
    o[i] = s;
    o[i + 1] = a * Math.cos(a * t);
    o[i + 2] = -a * a * s;
  };
const cosine =
  (a: number): Factor =>
  (t, o, i) => {
    const c = Math.cos(a * t);
    o[i] = c;
    o[i + 1] = -a * Math.sin(a * t);
    o[i + 2] = -a * a * c;
  };
const exponential =
  (a: number): Factor =>
  (t, o, i) => {
    const e = Math.exp(a * t);
    o[i] = e;
    o[i + 1] = a * e;
    o[i + 2] = a * a * e;
  };

const PI = Math.PI;

/** Factors per displacement component and coordinate: u_c(x) = Π_k F[c][k](x_k). Chosen smooth, non-polynomial, non-zero on part of the boundary. */
const FIELDS: Record<1 | 2 | 3, Factor[][]> = {
  1: [[sine(PI)]],
  2: [
    [sine(PI), cosine(PI / 2)],
    [exponential(0.5), sine(PI)]
  ],
  3: [
    [sine(PI), cosine(PI / 2), exponential(0.5)],
    [exponential(0.5), sine(PI), cosine(PI / 2)],
    [cosine(PI / 2), exponential(0.5), sine(PI)]
  ]
};

export interface ManufacturedField {
  kind: StrainKind;
  dim: number;
  /** displacement components (= dofs per node) */
  components: number;
  /** the domain: [lower, upper] per coordinate */
  domain: [number, number][];
  /** u(x) */
  displacement(x: ArrayLike<number>, out: Float64Array): Float64Array;
  /** ∂u_c/∂x_k, components × dim row-major */
  gradient(x: ArrayLike<number>, out: Float64Array): Float64Array;
  /** b(x) = −div σ(u) (axisymmetric: with the hoop terms), per unit volume */
  bodyForce(x: ArrayLike<number>, out: Float64Array): Float64Array;
  /** the exact strain in the kernel's component order for this kind */
  strain(x: ArrayLike<number>, out: Float64Array): Float64Array;
  /** a short statement of the field for the record */
  description: string;
}

/** Lamé constants λ = Eν/((1+ν)(1−2ν)), μ = E/(2(1+ν)). */
export function lame(m: Material): { lambda: number; mu: number } {
  return { lambda: (m.E * m.nu) / ((1 + m.nu) * (1 - 2 * m.nu)), mu: m.E / (2 * (1 + m.nu)) };
}

const DESCRIPTIONS: Record<StrainKind, string> = {
  bar: 'u = sin(πx) on [0, 1]',
  'plane-stress': 'u = sin(πx) cos(πy/2), v = exp(x/2) sin(πy) on the unit square',
  'plane-strain': 'u = sin(πx) cos(πy/2), v = exp(x/2) sin(πy) on the unit square',
  axisymmetric: 'u = sin(πr) cos(πz/2), w = exp(r/2) sin(πz) on r ∈ [1, 2], z ∈ [0, 1]',
  solid:
    'u = sin(πx) cos(πy/2) exp(z/2), v = exp(x/2) sin(πy) cos(πz/2), w = cos(πx/2) exp(y/2) sin(πz) on the unit cube'
};

/** The manufactured field of a built-in kind with its body force for the given material. */
export function manufacturedField(kind: StrainKind, material: Material): ManufacturedField {
  const dim = kind === 'bar' ? 1 : kind === 'solid' ? 3 : 2;
  const factors = FIELDS[dim as 1 | 2 | 3];
  const components = dim;
  const domain: [number, number][] =
    kind === 'axisymmetric'
      ? [
          [1, 2],
          [0, 1]
        ]
      : Array.from({ length: dim }, () => [0, 1] as [number, number]);
  // f[(c*dim + k)*3 + j]: j-th derivative of factor k of component c
  const f = new Float64Array(components * dim * 3);
  // the factors at the last point asked for: displacement, gradient, strain and body force at one point share them
  const last = new Float64Array(dim).fill(NaN);
  const load = (x: ArrayLike<number>) => {
    let same = true;
    for (let k = 0; k < dim; k++) if (last[k] !== x[k]) same = false;
    if (same) return;
    for (let k = 0; k < dim; k++) last[k] = x[k];
    for (let c = 0; c < components; c++)
      for (let k = 0; k < dim; k++) factors[c][k](x[k], f, (c * dim + k) * 3);
  };
  // derivative orders per coordinate, precomputed so the quadrature loops allocate nothing
  const ORDER0 = new Int8Array(dim);
  const ORDER1 = Array.from({ length: dim }, (_, k) =>
    Int8Array.from({ length: dim }, (_, i) => (i === k ? 1 : 0))
  );
  const ORDER2 = Array.from({ length: dim }, (_, k) =>
    Array.from({ length: dim }, (_, l) =>
      Int8Array.from({ length: dim }, (_, i) => (i === k ? 1 : 0) + (i === l ? 1 : 0))
    )
  );
  /** ∂^(a+b+…) u_c / ∂x_0^a ∂x_1^b …, orders per coordinate */
  const derivative = (c: number, orders: Int8Array) => {
    let p = 1;
    for (let k = 0; k < dim; k++) p *= f[(c * dim + k) * 3 + orders[k]];
    return p;
  };
  const d1 = (c: number, k: number) => derivative(c, ORDER1[k]);
  const d2 = (c: number, k: number, l: number) => derivative(c, ORDER2[k][l]);
  const value = (c: number) => derivative(c, ORDER0);

  const { E, nu } = material;
  const { lambda, mu } = lame(material);

  const displacement = (x: ArrayLike<number>, out: Float64Array) => {
    load(x);
    for (let c = 0; c < components; c++) out[c] = value(c);
    return out;
  };
  const gradient = (x: ArrayLike<number>, out: Float64Array) => {
    load(x);
    for (let c = 0; c < components; c++) for (let k = 0; k < dim; k++) out[c * dim + k] = d1(c, k);
    return out;
  };

  let bodyForce: (x: ArrayLike<number>, out: Float64Array) => Float64Array;
  switch (kind) {
    case 'bar':
      // E u″ + b = 0
      bodyForce = (x, out) => {
        load(x);
        out[0] = -E * d2(0, 0, 0);
        return out;
      };
      break;
    case 'plane-stress':
    case 'plane-strain': {
      // σx = A εx + B εy, σy = B εx + A εy, τ = G γ; ∂σx/∂x + ∂τ/∂y + bx = 0, ∂τ/∂x + ∂σy/∂y + by = 0:
      // bx = −(A u,xx + G u,yy + (B + G) v,xy), by = −(G v,xx + A v,yy + (B + G) u,xy)
      const A = kind === 'plane-stress' ? E / (1 - nu * nu) : lambda + 2 * mu;
      const B = kind === 'plane-stress' ? (E * nu) / (1 - nu * nu) : lambda;
      const G = mu;
      bodyForce = (x, out) => {
        load(x);
        out[0] = -(A * d2(0, 0, 0) + G * d2(0, 1, 1) + (B + G) * d2(1, 0, 1));
        out[1] = -(G * d2(1, 0, 0) + A * d2(1, 1, 1) + (B + G) * d2(0, 0, 1));
        return out;
      };
      break;
    }
    case 'axisymmetric':
      // ∂σr/∂r + ∂τ/∂z + (σr − σθ)/r + br = 0, ∂τ/∂r + ∂σz/∂z + τ/r + bz = 0 with εθ = u/r:
      // br = −[(λ+2μ)(u,rr + u,r/r − u/r²) + μ u,zz + (λ+μ) w,rz]
      // bz = −[(λ+2μ) w,zz + μ (w,rr + w,r/r) + (λ+μ)(u,rz + u,z/r)]
      bodyForce = (x, out) => {
        load(x);
        const r = x[0];
        const u = value(0);
        out[0] = -(
          (lambda + 2 * mu) * (d2(0, 0, 0) + d1(0, 0) / r - u / (r * r)) +
          mu * d2(0, 1, 1) +
          (lambda + mu) * d2(1, 0, 1)
        );
        out[1] = -(
          (lambda + 2 * mu) * d2(1, 1, 1) +
          mu * (d2(1, 0, 0) + d1(1, 0) / r) +
          (lambda + mu) * (d2(0, 0, 1) + d1(0, 1) / r)
        );
        return out;
      };
      break;
    case 'solid':
      // Navier: (λ+μ) ∇(div u) + μ ∇²u + b = 0
      bodyForce = (x, out) => {
        load(x);
        for (let i = 0; i < 3; i++) {
          let gradDiv = 0;
          let laplace = 0;
          for (let j = 0; j < 3; j++) {
            gradDiv += d2(j, i, j);
            laplace += d2(i, j, j);
          }
          out[i] = -((lambda + mu) * gradDiv + mu * laplace);
        }
        return out;
      };
      break;
    default:
      throw new Error(`no manufactured field for strain kind '${String(kind)}'`);
  }
  const uAt = new Float64Array(components);
  const gradAt = new Float64Array(components * dim);
  const strain = (x: ArrayLike<number>, out: Float64Array) =>
    strainOf(kind, displacement(x, uAt), gradient(x, gradAt), x, out);
  return {
    kind,
    dim,
    components,
    domain,
    displacement,
    gradient,
    bodyForce,
    strain,
    description: DESCRIPTIONS[kind]
  };
}
