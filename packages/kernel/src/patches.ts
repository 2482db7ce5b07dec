import { definePatch, type MacroPatch } from './mesh';

/**
 * MacNeal & Harder (1985), "A proposed standard set of problems to test finite element accuracy",
 * Finite Elements in Analysis and Design 1, 3–20, Fig. 1: the membrane patch, a 0.24 × 0.12 rectangle
 * with four interior vertices; E = 1.0e6, ν = 0.25, t = 0.001. Exact field u = 1e-3 (x + y/2),
 * v = 1e-3 (y + x/2): σx = σy = 1333.33, τxy = 400 (plane stress).
 */
export const MACNEAL_HARDER_MEMBRANE_PATCH: MacroPatch = definePatch(
  'macneal-harder-membrane-patch',
  'quadrilateral',
  [
    [0, 0],
    [0.24, 0],
    [0.24, 0.12],
    [0, 0.12],
    [0.04, 0.02],
    [0.18, 0.03],
    [0.16, 0.08],
    [0.08, 0.08]
  ],
  [
    [4, 5, 6, 7],
    [0, 1, 5, 4],
    [1, 2, 6, 5],
    [2, 3, 7, 6],
    [3, 0, 4, 7]
  ],
  'MacNeal & Harder 1985, Fig. 1 (membrane patch test)',
  {
    material: { E: 1.0e6, nu: 0.25 },
    thickness: 0.001,
    reference: { sigmaX: 4000 / 3, sigmaY: 4000 / 3, tauXY: 400 },
    referenceNote: 'exact stresses of the linear field, re-derivable by hand (MacNeal & Harder 1985)'
  }
);

/**
 * MacNeal & Harder (1985), Fig. 1: the solid patch, a unit cube with an interior hexahedron of eight
 * vertices joined to the faces by six hexahedra; E = 1.0e6, ν = 0.25. Exact field
 * u = 1e-3 (2x + y + z)/2, v = 1e-3 (x + 2y + z)/2, w = 1e-3 (x + y + 2z)/2: σ = 2000, τ = 400.
 */
export const MACNEAL_HARDER_SOLID_PATCH: MacroPatch = definePatch(
  'macneal-harder-solid-patch',
  'hexahedron',
  [
    [0, 0, 0],
    [1, 0, 0],
    [1, 1, 0],
    [0, 1, 0],
    [0, 0, 1],
    [1, 0, 1],
    [1, 1, 1],
    [0, 1, 1],
    [0.249, 0.342, 0.192],
    [0.826, 0.288, 0.288],
    [0.85, 0.649, 0.263],
    [0.273, 0.75, 0.23],
    [0.32, 0.186, 0.643],
    [0.677, 0.305, 0.683],
    [0.788, 0.693, 0.644],
    [0.165, 0.745, 0.702]
  ],
  [
    [8, 9, 10, 11, 12, 13, 14, 15],
    [0, 1, 2, 3, 8, 9, 10, 11],
    [4, 7, 6, 5, 12, 15, 14, 13],
    [0, 4, 5, 1, 8, 12, 13, 9],
    [3, 2, 6, 7, 11, 10, 14, 15],
    [0, 3, 7, 4, 8, 11, 15, 12],
    [1, 5, 6, 2, 9, 13, 14, 10]
  ],
  'MacNeal & Harder 1985, Fig. 1 (solid patch test; interior vertices from memory of the paper)',
  {
    material: { E: 1.0e6, nu: 0.25 },
    reference: { sigmaX: 2000, sigmaY: 2000, sigmaZ: 2000, tauXY: 400, tauYZ: 400, tauZX: 400 },
    referenceNote: 'exact stresses of the linear field, re-derivable by hand'
  }
);

/** Three bars of unequal length on [0, 1] (lengths chosen here: common practice, no source); u = 1e-3 x gives εx = 1e-3. */
export const BAR_PATCH: MacroPatch = definePatch(
  'bar-patch',
  'interval',
  [[0], [0.2], [0.55], [1]],
  [
    [0, 1],
    [1, 2],
    [2, 3]
  ],
  'three unequal intervals on [0, 1] (common practice, no source)',
  { material: { E: 1, nu: 0 }, area: 1, reference: { strain: 1e-3 } }
);

/**
 * A distorted 2 × 2 patch on r ∈ [1, 2], z ∈ [0, 1] (distortion chosen here: common practice, no source);
 * u = 1e-3 r, w = 2e-3 z give εr = εθ = 1e-3, εz = 2e-3.
 */
export const AXISYMMETRIC_PATCH: MacroPatch = definePatch(
  'axisymmetric-patch',
  'quadrilateral',
  [
    [1, 0],
    [1.4, 0],
    [2, 0],
    [1, 0.4],
    [1.55, 0.6],
    [2, 0.55],
    [1, 1],
    [1.6, 1],
    [2, 1]
  ],
  [
    [0, 1, 4, 3],
    [1, 2, 5, 4],
    [3, 4, 7, 6],
    [4, 5, 8, 7]
  ],
  'distorted 2 × 2 patch on r ∈ [1, 2], z ∈ [0, 1] (common practice, no source)',
  { material: { E: 1, nu: 0.25 }, reference: { strainR: 1e-3, strainZ: 2e-3, strainTheta: 1e-3 } }
);

const STRIP_SOURCE = 'MacNeal & Harder 1985, Fig. 2 (straight cantilever beam)';
const STRIP = {
  material: { E: 1.0e7, nu: 0.3 },
  thickness: 0.1,
  reference: { tipShearDeflection: 0.1081, tipExtensionDisplacement: 3.0e-5 },
  referenceNote: 'theoretical tip displacements for a unit tip load (MacNeal & Harder 1985, Table 2)'
};

function strip(name: string, top: number[]): MacroPatch {
  const bottom = [0, 1, 2, 3, 4, 5, 6];
  const vertices = [...bottom.map((x) => [x, 0]), ...top.map((x) => [x, 0.2])];
  const cells = [0, 1, 2, 3, 4, 5].map((i) => [i, i + 1, 8 + i, 7 + i]);
  return definePatch(
    name,
    'quadrilateral',
    vertices,
    cells,
    `${STRIP_SOURCE}: ${name.replace('cantilever-strip-', '')} cells`,
    STRIP
  );
}

/**
 * The straight cantilever of MacNeal & Harder (1985): 6.0 × 0.2, thickness 0.1, E = 1.0e7, ν = 0.3,
 * six cells of rectangular, trapezoidal or parallelogram shape (the skewed edges lean 45°; the exact
 * offsets are from memory of the paper's figure). Clamped at x = 0, loaded at x = 6.
 */
export const CANTILEVER_STRIP: {
  rectangular: MacroPatch;
  trapezoidal: MacroPatch;
  parallelogram: MacroPatch;
} = {
  rectangular: strip('cantilever-strip-rectangular', [0, 1, 2, 3, 4, 5, 6]),
  trapezoidal: strip('cantilever-strip-trapezoidal', [0, 1.2, 1.8, 3.2, 3.8, 5.2, 6]),
  parallelogram: strip('cantilever-strip-parallelogram', [0.2, 1.2, 2.2, 3.2, 4.2, 5.2, 6.2])
};

/**
 * Cook's tapered membrane (Cook 1974, "Improved two-dimensional finite element", J. Struct. Div. ASCE 100):
 * corners (0, 0), (48, 44), (48, 60), (0, 44); left edge clamped, unit total shear on the right edge;
 * E = 1, ν = 1/3, t = 1, plane stress. The reference value is the vertical displacement of the loaded edge's
 * midpoint (48, 52); the top corner (48, 60) converges to about 25.1. One macro cell: refine it with refinePatch.
 */
export const TAPERED_MEMBRANE: MacroPatch = definePatch(
  'tapered-membrane',
  'quadrilateral',
  [
    [0, 0],
    [48, 44],
    [48, 60],
    [0, 44]
  ],
  [[0, 1, 2, 3]],
  'Cook 1974 (tapered membrane under end shear)',
  {
    material: { E: 1, nu: 1 / 3 },
    thickness: 1,
    reference: { loadedEdgeMidpointVerticalDisplacement: 23.96 },
    referenceNote:
      'converged vertical displacement at (48, 52), the midpoint of the loaded edge; value from memory of the published benchmark literature'
  }
);
