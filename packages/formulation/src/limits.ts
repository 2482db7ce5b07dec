import type { CellName } from './types';

/** The static limits of format version 1 (formulation-format.md, "Validation and errors"). */
export const FORMAT_LIMITS = Object.freeze({
  /** UTF-8 bytes of the whole document */
  documentBytes: 64 * 1024,
  /** nodes of one element */
  nodes: 64,
  /** UTF-8 bytes of one expression */
  expressionBytes: 4 * 1024,
  /** nesting of brackets, function calls, unary operators and powers inside one expression */
  nesting: 64,
  /** quadrature points of the stiffness rule (gauss: points per direction to the power of the dimension) */
  quadraturePoints: 1000,
  /** UTF-8 bytes of the summary */
  summaryBytes: 8 * 1024,
  /** characters of the one-line title */
  titleChars: 120,
  /** entries in `definitions` */
  definitions: 64,
  /** gauss points per direction */
  gaussPoints: { min: 1, max: 10 },
  /** highest simplex degree of exactness per cell (the published rules the kernel tabulates) */
  simplexDegree: { triangle: 9, tetrahedron: 6 } as Readonly<Record<'triangle' | 'tetrahedron', number>>,
  /** magnitude of a constant exponent in shape functions and definitions (keeps symbolic simplification bounded) */
  shapeExponent: 64,
  /** expression-tree nodes of one shape function after the definitions are inlined */
  inlinedNodes: 8192,
  /** expression-tree nodes of all shape functions together after inlining */
  inlinedNodesTotal: 32768,
  /** depth of an expression tree after inlining (a chain of function definitions nests calls) */
  inlinedDepth: 600,
  /** bracket nesting of a re-printed shape function or derivative, which mathjs must read back (it overflows near 300) */
  printedNesting: 128,
  /** depth of an expression tree as written: a sum of n terms is n deep (mathjs differentiation overflows near 1500) */
  treeDepth: 1000,
  /** YAML collection depth (a formulation needs 4) */
  yamlDepth: 16,
  /** diagnostics reported for one document; the rest are counted in a final one */
  diagnostics: 200
});

/** The elementary functions an author may call: [name, least arguments, most arguments]. */
const FUNCTION_ARITY: readonly (readonly [string, number, number])[] = [
  ['sqrt', 1, 1],
  ['abs', 1, 1],
  ['exp', 1, 1],
  ['log', 1, 1],
  ['sin', 1, 1],
  ['cos', 1, 1],
  ['tan', 1, 1],
  ['asin', 1, 1],
  ['acos', 1, 1],
  ['atan', 1, 1],
  ['sinh', 1, 1],
  ['cosh', 1, 1],
  ['tanh', 1, 1],
  ['min', 1, 16],
  ['max', 1, 16],
  ['pow', 2, 2]
];

/** Functions that symbolic differentiation introduces; allowed in `derivatives`, not in what authors write. */
const DERIVED_ARITY: readonly (readonly [string, number, number])[] = [
  ['sec', 1, 1],
  ['csc', 1, 1],
  ['cot', 1, 1],
  ['sech', 1, 1],
  ['csch', 1, 1],
  ['coth', 1, 1],
  ['sign', 1, 1]
];

/** Limits for reading back the parser's own re-printed shape functions and derivatives (longer and deeper than what authors write). */
export const PRINTED_EXPRESSION_LIMITS = Object.freeze({
  bytes: 512 * 1024,
  nesting: FORMAT_LIMITS.printedNesting,
  depth: 2 * FORMAT_LIMITS.treeDepth,
  /** nesting nodes (brackets, calls, unary signs, powers) on one path */
  nodes: 2 * FORMAT_LIMITS.inlinedDepth
});

export const ALLOWED_FUNCTIONS: readonly string[] = Object.freeze(FUNCTION_ARITY.map(([n]) => n));
export const DERIVED_FUNCTIONS: readonly string[] = Object.freeze(DERIVED_ARITY.map(([n]) => n));

export interface Arity {
  min: number;
  max: number;
}
const arityMap = (rows: readonly (readonly [string, number, number])[]): ReadonlyMap<string, Arity> =>
  new Map(rows.map(([n, min, max]) => [n, { min, max }]));
export const AUTHOR_FUNCTIONS: ReadonlyMap<string, Arity> = arityMap(FUNCTION_ARITY);
export const DERIVATIVE_FUNCTIONS: ReadonlyMap<string, Arity> = arityMap([
  ...FUNCTION_ARITY,
  ...DERIVED_ARITY
]);

/** Host-side numbers of the same functions, for constant expressions (node coordinates, material, weights). */
export const MATH_TABLE: Readonly<Record<string, (...args: number[]) => number>> = Object.freeze({
  sqrt: Math.sqrt,
  abs: Math.abs,
  exp: Math.exp,
  log: Math.log,
  sin: Math.sin,
  cos: Math.cos,
  tan: Math.tan,
  asin: Math.asin,
  acos: Math.acos,
  atan: Math.atan,
  sinh: Math.sinh,
  cosh: Math.cosh,
  tanh: Math.tanh,
  min: Math.min,
  max: Math.max,
  pow: Math.pow,
  sec: (v: number) => 1 / Math.cos(v),
  csc: (v: number) => 1 / Math.sin(v),
  cot: (v: number) => 1 / Math.tan(v),
  sech: (v: number) => 1 / Math.cosh(v),
  csch: (v: number) => 1 / Math.sinh(v),
  coth: (v: number) => 1 / Math.tanh(v),
  sign: Math.sign
});

export const CELLS: readonly CellName[] = [
  'interval',
  'triangle',
  'quadrilateral',
  'tetrahedron',
  'hexahedron'
];
