// @isoledger/kernel: the numerical ground floor of Isoledger. Pure functions on typed arrays, no I/O.
export { KernelError } from './errors';
export { seededUniform } from './random';
export {
  type CellName,
  type ReferenceCell,
  CELL_NAMES,
  CONTAINMENT_TOLERANCE,
  referenceCell,
  facetNormal
} from './cells';
export {
  type QuadratureRule,
  type FacetQuadrature,
  EXACTNESS_TOLERANCE,
  MAX_GAUSS_POINTS,
  MAX_SIMPLEX_DEGREE,
  MAX_TESTED_DEGREE,
  gaussLegendre,
  gaussRule,
  simplexRule,
  collapsedGaussRule,
  explicitRule,
  ruleOfDegree,
  facetQuadrature,
  monomialIntegral,
  exponentsOfDegree,
  degreeOfExactness
} from './quadrature';
export {
  type StrainKind,
  type Material,
  STRAIN_KINDS,
  kindDimension,
  dofsPerNode,
  strainComponents,
  rigidBodyModeCount,
  checkMaterial,
  lameConstants,
  elasticityMatrix,
  rigidBodyModes
} from './elasticity';
export {
  type Tabulation,
  type PointGeometry,
  type ElementOptions,
  type BodyLoad,
  type SurfaceLoad,
  jacobian,
  mapPoints,
  strainDisplacement,
  elementStiffness,
  stiffnessFromB,
  bodyForceVector,
  tractionVector,
  strainsAt,
  stressesAt
} from './element';
export { SparseSymmetric, assemble, assembleVector, elementDofMap } from './sparse';
export {
  type DirichletResult,
  type CholeskyOptions,
  CholeskyFactor,
  PIVOT_RELATIVE_TOLERANCE,
  choleskyFactor,
  solveSymmetric,
  solveWithDirichlet
} from './cholesky';
export {
  type OrderingMethod,
  type OrderingPrediction,
  chooseOrdering,
  fillReducingOrdering,
  orderingCandidates
} from './ordering';
export { SYMMETRY_TOLERANCE, symmetricEigen } from './eigen';
export {
  type MacroCellName,
  type MacroPatch,
  type Mesh,
  type MeshBoundary,
  type StructuredOptions,
  MERGE_RELATIVE_TOLERANCE,
  MAX_PERTURBATION,
  definePatch,
  macroPatchMesh,
  refinePatch,
  structuredPatch,
  structuredMesh,
  facetNodes,
  nodesWhere,
  elementCoords
} from './mesh';
export {
  MACNEAL_HARDER_MEMBRANE_PATCH,
  MACNEAL_HARDER_SOLID_PATCH,
  BAR_PATCH,
  AXISYMMETRIC_PATCH,
  CANTILEVER_STRIP,
  TAPERED_MEMBRANE
} from './patches';
