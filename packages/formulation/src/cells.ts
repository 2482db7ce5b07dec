import type { CellName, StrainKind } from './types';

/** Geometric facts of the reference cells (formulation-format.md, "Reference cells"). */
export interface CellFacts {
  dim: 1 | 2 | 3;
  /** the default names of the natural coordinates */
  coordinates: string[];
  /** measure of the reference cell */
  measure: number;
  /** the quadrature rule family that fits the cell */
  rule: 'gauss' | 'simplex';
  /** the article and name for messages: "a triangle" */
  phrase: string;
  /** the domain as text for messages */
  domain: string;
}

export const CELL_FACTS: Readonly<Record<CellName, CellFacts>> = Object.freeze({
  interval: {
    dim: 1,
    coordinates: ['xi'],
    measure: 2,
    rule: 'gauss',
    phrase: 'an interval',
    domain: '-1 ≤ xi ≤ 1'
  },
  triangle: {
    dim: 2,
    coordinates: ['xi', 'eta'],
    measure: 1 / 2,
    rule: 'simplex',
    phrase: 'a triangle',
    domain: 'xi ≥ 0, eta ≥ 0, xi + eta ≤ 1'
  },
  quadrilateral: {
    dim: 2,
    coordinates: ['xi', 'eta'],
    measure: 4,
    rule: 'gauss',
    phrase: 'a quadrilateral',
    domain: '-1 ≤ xi, eta ≤ 1'
  },
  tetrahedron: {
    dim: 3,
    coordinates: ['xi', 'eta', 'zeta'],
    measure: 1 / 6,
    rule: 'simplex',
    phrase: 'a tetrahedron',
    domain: 'xi, eta, zeta ≥ 0, xi + eta + zeta ≤ 1'
  },
  hexahedron: {
    dim: 3,
    coordinates: ['xi', 'eta', 'zeta'],
    measure: 8,
    rule: 'gauss',
    phrase: 'a hexahedron',
    domain: '-1 ≤ xi, eta, zeta ≤ 1'
  }
});

/** Nodes may sit on the boundary of the closed cell up to rounding of expressions such as 1/3 + 2/3. */
export const CELL_CONTAINMENT_TOLERANCE = 1e-12;

/** True when the point lies in the closed reference cell, within `tol`. */
export function insideCell(
  cell: CellName,
  point: readonly number[],
  tol = CELL_CONTAINMENT_TOLERANCE
): boolean {
  switch (cell) {
    case 'interval':
    case 'quadrilateral':
    case 'hexahedron':
      return point.every((c) => c >= -1 - tol && c <= 1 + tol);
    case 'triangle':
    case 'tetrahedron': {
      let sum = 0;
      for (const c of point) {
        if (c < -tol) return false;
        sum += c;
      }
      return sum <= 1 + tol;
    }
  }
}

/** The dimension each built-in strain kind needs (formulation-format.md, "Built-in strain kinds"). */
export const STRAIN_DIMENSION: Readonly<Record<StrainKind, 1 | 2 | 3>> = Object.freeze({
  bar: 1,
  'plane-stress': 2,
  'plane-strain': 2,
  axisymmetric: 2,
  solid: 3
});

export const STRAIN_KINDS: readonly StrainKind[] = [
  'bar',
  'plane-stress',
  'plane-strain',
  'axisymmetric',
  'solid'
];
