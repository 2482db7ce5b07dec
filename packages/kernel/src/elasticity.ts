import { KernelError, requireInput } from './errors';

export type StrainKind = 'bar' | 'plane-stress' | 'plane-strain' | 'axisymmetric' | 'solid';
export const STRAIN_KINDS: readonly StrainKind[] = [
  'bar',
  'plane-stress',
  'plane-strain',
  'axisymmetric',
  'solid'
];

/** Isotropic linear elastic material: Young's modulus E > 0, Poisson's ratio −1 < ν < 1/2. */
export interface Material {
  E: number;
  nu: number;
}

interface KindData {
  dim: 1 | 2 | 3;
  dofs: number;
  components: number;
  rigid: number;
}

const KINDS: Record<StrainKind, KindData> = {
  bar: { dim: 1, dofs: 1, components: 1, rigid: 1 },
  'plane-stress': { dim: 2, dofs: 2, components: 3, rigid: 3 },
  'plane-strain': { dim: 2, dofs: 2, components: 3, rigid: 3 },
  axisymmetric: { dim: 2, dofs: 2, components: 4, rigid: 1 },
  solid: { dim: 3, dofs: 3, components: 6, rigid: 6 }
};

function kindData(kind: StrainKind): KindData {
  const k = KINDS[kind];
  if (!k)
    throw new KernelError(
      'invalid-input',
      `unknown strain kind '${String(kind)}'; expected one of ${STRAIN_KINDS.join(', ')}`
    );
  return k;
}

/** Spatial dimension of a strain kind (axisymmetric: the r–z half plane). */
export function kindDimension(kind: StrainKind): 1 | 2 | 3 {
  return kindData(kind).dim;
}

/** Displacement components per node: bar 1, plane and axisymmetric 2, solid 3. */
export function dofsPerNode(kind: StrainKind): number {
  return kindData(kind).dofs;
}

/** Rows of B: bar εx; plane εx, εy, γxy; axisymmetric εr, εz, εθ, γrz; solid εx, εy, εz, γxy, γyz, γzx. */
export function strainComponents(kind: StrainKind): number {
  return kindData(kind).components;
}

/** Rigid-body modes of the kind: bar 1, plane 3, axisymmetric 1 (axial translation), solid 6. */
export function rigidBodyModeCount(kind: StrainKind): number {
  return kindData(kind).rigid;
}

/** Checks E and ν; names the bad field. */
export function checkMaterial(m: Material): void {
  requireInput(m !== null && typeof m === 'object', 'material must be an object { E, nu }');
  requireInput(
    Number.isFinite(m.E) && m.E > 0,
    () => `material.E must be a finite positive number, got ${m.E}`,
    { field: 'E' }
  );
  requireInput(
    Number.isFinite(m.nu) && m.nu > -1 && m.nu < 0.5,
    () => `material.nu must lie in (−1, 0.5), got ${m.nu}`,
    {
      field: 'nu'
    }
  );
}

/** Lamé constants used by the isotropic fast paths: plane stress uses λ* = 2λμ/(λ + 2μ) = Eν/(1 − ν²). */
export function lameConstants(kind: StrainKind, m: Material): { lambda: number; mu: number } {
  const mu = m.E / (2 * (1 + m.nu));
  const lambda =
    kind === 'plane-stress' ? (m.E * m.nu) / (1 - m.nu * m.nu) : (m.E * m.nu) / ((1 + m.nu) * (1 - 2 * m.nu));
  return { lambda, mu };
}

/** Isotropic elastic D (ncomp × ncomp, row-major) of the kind, in the component order of `strainComponents`. */
export function elasticityMatrix(kind: StrainKind, m: Material): Float64Array {
  const n = strainComponents(kind);
  checkMaterial(m);
  const { E, nu } = m;
  const D = new Float64Array(n * n);
  switch (kind) {
    case 'bar':
      D[0] = E;
      break;
    case 'plane-stress': {
      const c = E / (1 - nu * nu);
      D.set([c, c * nu, 0, c * nu, c, 0, 0, 0, (c * (1 - nu)) / 2]);
      break;
    }
    case 'plane-strain': {
      const c = E / ((1 + nu) * (1 - 2 * nu));
      D.set([c * (1 - nu), c * nu, 0, c * nu, c * (1 - nu), 0, 0, 0, (c * (1 - 2 * nu)) / 2]);
      break;
    }
    case 'axisymmetric': {
      const c = E / ((1 + nu) * (1 - 2 * nu));
      const a = c * (1 - nu);
      const b = c * nu;
      D.set([a, b, b, 0, b, a, b, 0, b, b, a, 0, 0, 0, 0, (c * (1 - 2 * nu)) / 2]);
      break;
    }
    case 'solid': {
      const { lambda, mu } = lameConstants(kind, m);
      for (let i = 0; i < 3; i++) {
        for (let j = 0; j < 3; j++) D[i * 6 + j] = lambda;
        D[i * 6 + i] = lambda + 2 * mu;
        D[(i + 3) * 6 + i + 3] = mu;
      }
      break;
    }
  }
  return D;
}

/**
 * Rigid-body modes as nodal dof vectors, ndof × nmodes row-major (column k = mode k):
 * translations, then rotations about the origin (plane: (−y, x); solid: about x, y, z in turn).
 */
export function rigidBodyModes(
  kind: StrainKind,
  coords: Float64Array,
  nodes: number,
  dim: number
): Float64Array {
  const k = kindData(kind);
  requireInput(dim === k.dim, () => `${kind} needs ${k.dim}-dimensional coordinates, got dim = ${dim}`);
  requireInput(
    coords.length === nodes * dim,
    () => `coords has ${coords.length} values; ${nodes} nodes × ${dim} need ${nodes * dim}`
  );
  const nm = k.rigid;
  const ndof = nodes * k.dofs;
  const R = new Float64Array(ndof * nm);
  for (let i = 0; i < nodes; i++) {
    const x = coords[i * dim];
    const y = dim > 1 ? coords[i * dim + 1] : 0;
    const z = dim > 2 ? coords[i * dim + 2] : 0;
    const row = (c: number) => (i * k.dofs + c) * nm;
    switch (kind) {
      case 'bar':
        R[row(0)] = 1;
        break;
      case 'axisymmetric':
        R[row(1)] = 1; // axial translation w = 1
        break;
      case 'plane-stress':
      case 'plane-strain':
        R[row(0) + 0] = 1;
        R[row(1) + 1] = 1;
        R[row(0) + 2] = -y;
        R[row(1) + 2] = x;
        break;
      case 'solid':
        R[row(0) + 0] = 1;
        R[row(1) + 1] = 1;
        R[row(2) + 2] = 1;
        // about x: (0, −z, y); about y: (z, 0, −x); about z: (−y, x, 0)
        R[row(1) + 3] = -z;
        R[row(2) + 3] = y;
        R[row(0) + 4] = z;
        R[row(2) + 4] = -x;
        R[row(0) + 5] = -y;
        R[row(1) + 5] = x;
        break;
    }
  }
  return R;
}
