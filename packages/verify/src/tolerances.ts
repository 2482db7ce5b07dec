/**
 * Every tolerance and fixed choice of the engine, each with its reason. Changing one changes the
 * meaning of a figure in the record: bump ENGINE_VERSION with it.
 */

/** Shape-function identities (δ_ij, Σ N = 1, linear completeness, facet vanishing): verification.md §1. */
export const SHAPE_TOLERANCE = 1e-12;

/**
 * A monomial counts as reproduced when Σ N_i m(ξ_i) − m(ξ) stays below this: monomials up to degree
 * 8 on the reference cells are bounded by 1, and sums of up to 64 products round to ~1e-14
 * (common practice, no source); a missing monomial deviates by O(0.01) or more.
 */
export const COMPLETENESS_TOLERANCE = 1e-10;

/** Highest total degree `completeness-degree` looks for (64 nodes never span all of degree 9 in 2D/3D). */
export const MAX_COMPLETENESS_DEGREE = 10;

/** A node lies on a reference facet when its distance to the facet plane is below this (nodes are written as decimals). */
export const ON_FACET_TOLERANCE = 1e-10;

/** Seeded interior sample points of the shape checks (verification.md: "random interior points"). */
export const INTERIOR_SAMPLES = 24;
export const INTERIOR_SEED = 20261201;
/** Random points per facet for face-conformity, besides its vertices, centre and facet quadrature points. */
export const FACET_SAMPLES = 8;
export const FACET_SEED = 7041;

/** ‖K − Kᵀ‖_F / ‖K‖_F: verification.md §2. */
export const SYMMETRY_TOLERANCE = 1e-12;
/** max ‖K r‖ / (‖K‖_F ‖r‖): verification.md §2. */
export const RIGID_MODE_TOLERANCE = 1e-10;
/** An eigenvalue counts as zero when λ ≤ this × λmax: verification.md §2. */
export const ZERO_EIGENVALUE_RATIO = 1e-8;
/** λmin / λmax ≥ −this: verification.md §2. */
export const NEGATIVE_EIGENVALUE_RATIO = 1e-10;
/** max |λ′_k − λ_k| / λmax after a rotation and translation: verification.md §2. */
export const FRAME_INVARIANCE_TOLERANCE = 1e-10;

/** Patch-test residuals, displacements and stresses, relative: verification.md §3. */
export const PATCH_TOLERANCE = 1e-8;

/** Convergence passes when observed ≥ theoretical − this on the last two meshes: verification.md §4. */
export const RATE_MARGIN = 0.2;
/** Seed of the mild distortion of the coarse convergence grid. */
export const CONVERGENCE_SEED = 1985;
/** Interior vertices of the coarse grid move by up to this fraction of its spacing (mild: every cell stays convex). */
export const CONVERGENCE_PERTURBATION = 0.15;

/**
 * Central-difference step for derivatives of a custom block's declared convergence field (its exact
 * strain through the block's own B): truncation h² ~ 1e-8 of the field's scale and rounding
 * 1e-16 / h ~ 1e-12; far below the discretisation errors of the meshes used (common practice, no source).
 */
export const FIELD_DIFFERENCE_STEP = 1e-4;

/**
 * Degree of the facet rules for boundary loads: N along a facet of the elements in the catalogue is
 * at most cubic and the facet measure of a multilinear face at most quadratic, so degree 6 integrates
 * consistent loads of constant tractions exactly; higher stiffness rules raise it with them.
 */
export function facetRuleDegree(stiffnessDegree: number): number {
  return Math.min(12, Math.max(6, stiffnessDegree + 2));
}
