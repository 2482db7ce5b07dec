// Host side: a parsed definition's expressions are parsed again, checked against their field's
// whitelist, and compiled into plain JavaScript arithmetic. The generated program contains no text
// of the author's: symbols become generated local names, numbers are re-printed from their values,
// functions are looked up in a fixed table. The program runs only inside an isolate.
import { createHash } from 'node:crypto';
import {
  canonicalJson,
  checkExpression,
  DERIVATIVE_FUNCTIONS,
  meaningOf,
  parseExpressionText,
  policyForField,
  PRINTED_EXPRESSION_LIMITS,
  CELL_FACTS,
  type Definition,
  type ExpressionField,
  type ValueShape
} from '@isoledger/formulation';
import type {
  ArrayNode,
  ConstantNode,
  FunctionNode,
  MathNode,
  OperatorNode,
  ParenthesisNode,
  SymbolNode
} from 'mathjs';
import { SandboxError } from './errors';

export type FieldRef =
  | 'B'
  | 'D'
  | 'weight'
  | 'rigid_modes'
  | 'patch.displacement'
  | 'convergence.displacement'
  | 'convergence.body_force';
export const FIELD_REFS: readonly FieldRef[] = [
  'B',
  'D',
  'weight',
  'rigid_modes',
  'patch.displacement',
  'convergence.displacement',
  'convergence.body_force'
];

/** One compiled field: its entry point in the program, the symbols it reads (in order), the size of its value. */
export interface CompiledField {
  entry: string;
  symbols: string[];
  size: number;
  rows: number;
  cols: number;
}

export interface CompiledProgram {
  /** keyed by the definition's meaning and its derived functions */
  key: string;
  source: string;
  nodes: number;
  dim: number;
  fields: Partial<Record<FieldRef, CompiledField>>;
  /** why a field cannot be evaluated (a built-in strain kind has no B) */
  missing: Partial<Record<FieldRef, string>>;
}

const NUMBER_LITERAL = /^\d+(\.\d+)?(e[+-]\d+)?$/;

/** A JavaScript literal for a finite number, from its value (never from the author's text). */
export function numberLiteral(v: number): string {
  if (!Number.isFinite(v)) throw new SandboxError('invalid', `a non-finite number (${v}) cannot be compiled`);
  const magnitude = String(Math.abs(v));
  if (!NUMBER_LITERAL.test(magnitude))
    throw new SandboxError('internal', `unexpected number form ${magnitude}`);
  return v < 0 || Object.is(v, -0) ? `(-${magnitude})` : magnitude;
}

/** The value of an operand that is a literal (`4`, `(-0.5)`), else null. */
function literalValue(operand: string): number | null {
  const m = /^\(?(-?)(\d+(?:\.\d+)?(?:e[+-]\d+)?)\)?$/.exec(operand);
  return m ? Number(m[1] + m[2]) : null;
}

/**
 * Code that adds every distinct computed output to one of four sums. The sums stay finite while
 * every output is finite; a NaN or an infinity makes them non-finite. A sum of finite values that
 * overflows is a false alarm, settled by the exact scan that follows any alarm. Four sums rather
 * than one keep the additions from forming one long chain.
 */
const faultTerms = (operands: string[]) =>
  [...new Set(operands.filter((v) => literalValue(v) === null))]
    .map((v, k) => `a${k % 4} += ${v};`)
    .join(' ');
const FAULT_SUMS = 'let a0 = 0, a1 = 0, a2 = 0, a3 = 0;';

/**
 * Largest magnitude a value's bound may have for the value to be proven finite without a check: the
 * bound, computed in doubles, may fall short of the exact one by a relative error of about 2⁻⁵² per
 * operation, far less than the factor of 10⁸ between this and the largest double.
 */
const PROVEN_FINITE = numberLiteral(1e300);

/**
 * Bounds of functions on a finite argument, by the function's name, built from the arguments'
 * bounds; null where no bound holds (a negative argument of sqrt or log, a pole of tan): such a
 * value is always checked.
 */
const FUNCTION_BOUNDS: Record<string, ((args: string[]) => string) | null> = {
  abs: (a) => a[0],
  sign: () => '1',
  sin: () => '1',
  cos: () => '1',
  tanh: () => '1',
  sech: () => '1',
  atan: () => numberLiteral(Math.PI / 2),
  exp: (a) => `M.exp(${a[0]})`,
  sinh: (a) => `M.cosh(${a[0]})`,
  cosh: (a) => `M.cosh(${a[0]})`,
  min: (a) => `M.max(${a.join(', ')})`,
  max: (a) => `M.max(${a.join(', ')})`,
  sqrt: null,
  log: null,
  tan: null,
  asin: null,
  acos: null,
  pow: null,
  sec: null,
  csc: null,
  cot: null,
  csch: null,
  coth: null
};

const FUNCTION_NAMES: readonly string[] = [...DERIVATIVE_FUNCTIONS.keys()];

type Value =
  | { kind: 'scalar'; v: string }
  | { kind: 'matrix'; rows: number; cols: number; vector: boolean; v: string[] };

/**
 * Emits one loop body in single-assignment form: every operation a `const`, and an operation
 * written twice (the factor (1 - xi) of a dozen functions and their derivatives) computed once.
 *
 * Beside each value it emits, where one holds, a bound on its magnitude (`u5` for `t5`) in terms
 * of bounds on the inputs' magnitudes: |a ± b| ≤ A + B, |a b| ≤ A B, |a / c| ≤ A / |c| for a
 * constant c, |sin a| ≤ 1 and so on. Evaluated once per call, after the loop, from the magnitudes
 * of the inputs it read, the bounds prove every value of a polynomial finite for the batch at hand,
 * so its loop runs without per-value checks.
 * A division by a variable, sqrt, log and the like have no bound: their values are always checked.
 */
class Body {
  readonly lines: string[] = [];
  /** the bound of every value that has one, in the order the values were made */
  readonly boundLines: string[] = [];
  private n = 0;
  private readonly seen = new Map<string, string>();
  private readonly bounds = new Map<string, string | null>();
  /**
   * variables: each symbol's generated local; inputBounds: each local's bound (a name the program
   * computes from the batch before the loop).
   */
  constructor(
    private readonly variables: ReadonlyMap<string, string>,
    private readonly inputBounds: ReadonlyMap<string, string>
  ) {}
  /** The bound of a value's magnitude: a literal, an input's bound, a temporary's; null for none. */
  bound(v: string): string | null {
    const literal = literalValue(v);
    if (literal !== null) return numberLiteral(Math.abs(literal));
    return this.inputBounds.get(v) ?? this.bounds.get(v) ?? null;
  }
  /** Whether a value is computed (neither a literal nor an input) and has a bound. */
  provable(v: string): boolean {
    return literalValue(v) === null && !this.inputBounds.has(v) && this.bounds.get(v) != null;
  }
  /** The bound names a proof must find finite: every computed value's that has one. */
  boundNames(): string[] {
    return [...this.bounds.values()].filter((b): b is string => b !== null);
  }
  /** A bound built from the operands' bounds, or null when one of them has none. */
  private combine(operands: string[], make: (b: string[]) => string): string | null {
    const b = operands.map((v) => this.bound(v));
    return b.every((x) => x !== null) ? make(b as string[]) : null;
  }
  private temp(expr: string, bound: string | null, key = expr): string {
    const known = this.seen.get(key);
    if (known) return known;
    const k = this.n++;
    const t = `t${k}`;
    this.lines.push(`const ${t} = ${expr};`);
    this.seen.set(key, t);
    if (bound !== null) this.boundLines.push(`const u${k} = ${bound};`);
    this.bounds.set(t, bound === null ? null : `u${k}`);
    return t;
  }
  private sum(a: string, symbol: string, b: string): string {
    return this.temp(
      `${a} ${symbol} ${b}`,
      this.combine([a, b], ([x, y]) => `${x} + ${y}`)
    );
  }
  private product(a: string, b: string): string {
    return this.commutative(a, '*', b);
  }
  /** a + b and a * b: the same value whichever operand comes first, so one key for both orders. */
  private commutative(a: string, symbol: string, b: string): string {
    const [x, y] = a <= b ? [a, b] : [b, a];
    return this.temp(
      `${a} ${symbol} ${b}`,
      this.combine([a, b], ([p, q]) => `${p} ${symbol} ${q}`),
      `${x} ${symbol} ${y}`
    );
  }
  /** x / 2^k as x * 2^-k: the same bits (the reciprocal of a power of two is exact), a cheaper operation. */
  private divide(a: string, b: string, divisor: number | null): string {
    if (divisor !== null && divisor !== 0 && Number.isFinite(1 / divisor)) {
      const exponent = Math.log2(Math.abs(divisor));
      if (Number.isInteger(exponent) && Math.abs(exponent) < 1000)
        return this.product(a, numberLiteral(1 / divisor));
      return this.temp(
        `${a} / ${b}`,
        this.combine([a], ([x]) => `${x} / ${numberLiteral(Math.abs(divisor))}`)
      );
    }
    return this.temp(`${a} / ${b}`, null);
  }
  /** a ^ b: bounded for a whole exponent from 1 to 64, else always checked. */
  private power(a: string, b: string): string {
    const e = literalValue(b);
    const bound =
      e !== null && Number.isInteger(e) && e >= 1 && e <= 64
        ? this.combine([a], ([x]) => `M.pow(${x}, ${b})`)
        : null;
    return this.temp(`M.pow(${a}, ${b})`, bound);
  }
  private negate(a: string): string {
    return this.temp(`-${a}`, this.bound(a));
  }
  scalar(node: MathNode): string {
    const v = this.value(node);
    if (v.kind !== 'scalar') throw new SandboxError('invalid', 'a matrix where a number is needed');
    return v.v;
  }
  value(node: MathNode): Value {
    switch (node.type) {
      case 'ConstantNode': {
        const c = (node as ConstantNode).value as unknown;
        if (typeof c !== 'number') throw new SandboxError('invalid', 'only numbers may be compiled');
        return { kind: 'scalar', v: numberLiteral(c) };
      }
      case 'SymbolNode': {
        const name = (node as SymbolNode).name;
        if (name === 'pi') return { kind: 'scalar', v: numberLiteral(Math.PI) };
        const variable = this.variables.get(name);
        if (!variable) throw new SandboxError('invalid', `the symbol '${name}' is not available here`);
        return { kind: 'scalar', v: variable };
      }
      case 'ParenthesisNode':
        return this.value((node as ParenthesisNode).content);
      case 'OperatorNode':
        return this.operator(node as OperatorNode);
      case 'FunctionNode': {
        const f = node as FunctionNode;
        const name = FUNCTION_NAMES.find((n) => n === f.fn.name);
        if (!name || f.fn.type !== 'SymbolNode')
          throw new SandboxError('invalid', `the function '${f.fn.name}' is not allowed`);
        const args = f.args.map((a) => this.scalar(a));
        const rule = FUNCTION_BOUNDS[name];
        const bound = rule ? this.combine(args, rule) : null;
        return { kind: 'scalar', v: this.temp(`M.${name}(${args.join(', ')})`, bound) };
      }
      case 'ArrayNode': {
        const items = (node as ArrayNode).items;
        if (items.every((i) => i.type !== 'ArrayNode'))
          return {
            kind: 'matrix',
            rows: 1,
            cols: items.length,
            vector: true,
            v: items.map((i) => this.scalar(i))
          };
        const rows = items as ArrayNode[];
        const cols = rows[0].items.length;
        if (rows.some((r) => r.type !== 'ArrayNode' || r.items.length !== cols))
          throw new SandboxError('invalid', 'a matrix with rows of different lengths');
        return {
          kind: 'matrix',
          rows: rows.length,
          cols,
          vector: false,
          v: rows.flatMap((r) => r.items.map((i) => this.scalar(i)))
        };
      }
      default:
        throw new SandboxError('invalid', `'${node.type}' cannot be compiled`);
    }
  }
  private operator(o: OperatorNode): Value {
    if (o.args.length === 1) {
      const a = this.value(o.args[0]);
      if (o.fn === 'unaryPlus') return a;
      if (o.fn !== 'unaryMinus')
        throw new SandboxError('invalid', `the operator '${o.op}' cannot be compiled`);
      return a.kind === 'scalar'
        ? { kind: 'scalar', v: this.negate(a.v) }
        : { ...a, v: a.v.map((x) => this.negate(x)) };
    }
    const a = this.value(o.args[0]);
    const b = this.value(o.args[1]);
    const symbol = { add: '+', subtract: '-', multiply: '*', divide: '/' }[o.fn as string];
    if (a.kind === 'scalar' && b.kind === 'scalar') {
      if (o.fn === 'pow') return { kind: 'scalar', v: this.power(a.v, b.v) };
      if (!symbol) throw new SandboxError('invalid', `the operator '${o.op}' cannot be compiled`);
      if (symbol === '+' || symbol === '*') return { kind: 'scalar', v: this.commutative(a.v, symbol, b.v) };
      if (symbol === '/') return { kind: 'scalar', v: this.divide(a.v, b.v, literalValue(b.v)) };
      return { kind: 'scalar', v: this.sum(a.v, symbol, b.v) };
    }
    if (
      (o.fn === 'add' || o.fn === 'subtract') &&
      a.kind === 'matrix' &&
      b.kind === 'matrix' &&
      a.rows === b.rows &&
      a.cols === b.cols
    )
      return { ...a, v: a.v.map((x, k) => this.sum(x, symbol!, b.v[k])) };
    if (o.fn === 'multiply' && a.kind === 'scalar' && b.kind === 'matrix')
      return { ...b, v: b.v.map((x) => this.product(a.v, x)) };
    if (o.fn === 'multiply' && a.kind === 'matrix' && b.kind === 'scalar')
      return { ...a, v: a.v.map((x) => this.product(x, b.v)) };
    if (o.fn === 'divide' && a.kind === 'matrix' && b.kind === 'scalar')
      return { ...a, v: a.v.map((x) => this.divide(x, b.v, literalValue(b.v))) };
    if (
      o.fn === 'multiply' &&
      a.kind === 'matrix' &&
      b.kind === 'matrix' &&
      !a.vector &&
      !b.vector &&
      a.cols === b.rows
    ) {
      const v: string[] = [];
      for (let i = 0; i < a.rows; i++)
        for (let j = 0; j < b.cols; j++) {
          const terms: string[] = [];
          const factors: string[] = [];
          for (let k = 0; k < a.cols; k++) {
            terms.push(`${a.v[i * a.cols + k]} * ${b.v[k * b.cols + j]}`);
            factors.push(a.v[i * a.cols + k], b.v[k * b.cols + j]);
          }
          const bound = this.combine(factors, (f) =>
            f
              .filter((_, k) => k % 2 === 0)
              .map((x, k) => `${x} * ${f[2 * k + 1]}`)
              .join(' + ')
          );
          v.push(this.temp(terms.join(' + '), bound));
        }
      return { kind: 'matrix', rows: a.rows, cols: b.cols, vector: false, v };
    }
    throw new SandboxError('invalid', `the operator '${o.op}' does not apply to these operands`);
  }
}

/** Parses and checks one expression of a definition against its field's whitelist; SandboxError 'invalid' otherwise. */
function checked(
  def: Definition,
  text: string,
  field: ExpressionField,
  path: string
): { node: MathNode; shape: ValueShape } {
  if (typeof text !== 'string')
    throw Object.assign(new SandboxError('invalid', `${path} is not an expression`), { path });
  // the parser's re-printed expressions: longer and deeper than what an author writes, within fixed bounds
  const parsed = parseExpressionText(text, PRINTED_EXPRESSION_LIMITS);
  if (!parsed.node)
    throw Object.assign(
      new SandboxError('invalid', `${path}: ${parsed.problems[0]?.message ?? 'cannot be read'}`),
      { path }
    );
  const result = checkExpression(parsed.node, text, policyForField(def.cell, def.coordinates, field, path));
  if (result.problems.length || !result.shape)
    throw Object.assign(
      new SandboxError('invalid', `${path}: ${result.problems[0]?.message ?? 'not allowed'}`),
      { path }
    );
  return { node: parsed.node, shape: result.shape };
}

/** Symbols a tree reads, in first-use order (function names excluded). */
function symbolsOf(node: MathNode): string[] {
  const out: string[] = [];
  const walk = (n: MathNode) => {
    if (n.type === 'SymbolNode') {
      const name = (n as SymbolNode).name;
      if (name !== 'pi' && !out.includes(name)) out.push(name);
    } else if (n.type === 'FunctionNode') (n as FunctionNode).args.forEach(walk);
    else n.forEach(walk);
  };
  walk(node);
  return out;
}

const sha = (text: string) => createHash('sha256').update(text).digest('hex');

/** The cache key of a definition's program: its meaning (what definitionHash covers) and its derived functions. */
export function programKey(def: Definition): string {
  return 'p' + sha(canonicalJson({ meaning: meaningOf(def), derivatives: def.derivatives })).slice(0, 40);
}

function validateShape(def: Definition): { nodes: number; dim: number } {
  if (!def || typeof def !== 'object') throw new SandboxError('invalid', 'not a definition');
  const facts = (CELL_FACTS as Record<string, (typeof CELL_FACTS)['interval'] | undefined>)[def.cell];
  if (!facts || !Object.prototype.hasOwnProperty.call(CELL_FACTS, def.cell))
    throw new SandboxError('invalid', `unknown cell '${String(def.cell)}'`);
  const dim = facts.dim;
  if (!Array.isArray(def.coordinates) || def.coordinates.length !== dim)
    throw new SandboxError('invalid', 'the coordinates do not fit the cell');
  if (!Array.isArray(def.shape) || def.shape.length === 0 || def.shape.length > 64)
    throw new SandboxError('invalid', 'shape must list 1 to 64 functions');
  if (
    !Array.isArray(def.derivatives) ||
    def.derivatives.length !== def.shape.length ||
    def.derivatives.some((r) => !Array.isArray(r) || r.length !== dim)
  )
    throw new SandboxError('invalid', 'derivatives must list one function per node and coordinate');
  return { nodes: def.shape.length, dim };
}

/**
 * The loop of one entry point and what tells, after it, whether every value it stored is finite.
 * Where some computed value has a bound, the loop adds up the magnitudes of the inputs it reads
 * (a non-finite input makes the sum non-finite) and afterwards the bounds of every value follow
 * from those sums: when all are at most PROVEN_FINITE, every value of the batch is finite and the
 * loop needed to check only the values without a bound. Otherwise it checks every value. A value
 * that is a literal needs no check. Every value is stored, literal zeros too: R may hold anything
 * when the call starts (an earlier call's results, or memory the host did not clear). `code` ends
 * with `finite` true when every value is proven or checked finite, false when the exact scan must
 * decide.
 */
function loop(opts: {
  body: Body;
  outputs: string[];
  /** per-iteration code before the body (loads) */
  head: string;
  /** the inputs the loop reads, and the name of each one's bound */
  inputs: string[];
  inputBounds: string[];
  /** the loop header, such as `for (let q = 0; q < n; q++) {` */
  header: string;
  /** whether the inputs must be checked even when no output reads them */
  checkInputs: boolean;
  store: (value: string, k: number) => string;
}): string {
  const { body, outputs } = opts;
  const stores = outputs.map((v, k) => opts.store(v, k)).join('\n');
  const proving = outputs.some((v) => body.provable(v));
  const bounds = [...new Set(opts.inputBounds)];
  const magnitudes = proving
    ? opts.inputs.map((v, k) => `${opts.inputBounds[k]} += M.abs(${v});`).join(' ')
    : '';
  const checks = proving
    ? faultTerms(outputs.filter((v) => literalValue(v) === null && body.bound(v) === null))
    : faultTerms([...(opts.checkInputs ? opts.inputs : []), ...outputs]);
  const proof = [...bounds, ...body.boundNames()].map((u) => `${u} <= ${PROVEN_FINITE}`).join(' && ');
  return `${FAULT_SUMS}
${proving ? `let ${bounds.map((b) => `${b} = 0`).join(', ')};` : ''}
${opts.header}
${opts.head}
${magnitudes}
${body.lines.join('\n')}
${stores}
${checks}
}
const s = a0 + a1 + a2 + a3;
let finite = s - s === 0;
${
  proving
    ? `if (finite) {
${body.boundLines.join('\n')}
finite = ${proof};
}`
    : ''
}`;
}

/** Compiles every expression of a definition into one program: `tabulate` and one entry per custom field. */
export function compileDefinition(def: Definition): CompiledProgram {
  const { nodes, dim } = validateShape(def);
  const out: string[] = [];
  const coordVars = new Map(def.coordinates.map((c, k) => [c, `c${k}`] as const));
  // one loop body for every shape function and derivative, so common factors are computed once per
  // point; coordinates 0 and 2 share one sum of magnitudes, coordinate 1 has its own (two sums keep
  // the additions from forming one chain), and each is bounded by its sum
  const magnitudeOf = (k: number) => `m${k % 2}`;
  const body = new Body(
    coordVars,
    new Map(def.coordinates.map((_, k) => [`c${k}`, magnitudeOf(k)] as const))
  );
  const shapeValues = def.shape.map((text, i) =>
    body.scalar(checked(def, text, 'shape', `shape[${i}]`).node)
  );
  const derivValues = def.derivatives.map((row, i) =>
    row.map((text, k) => body.scalar(checked(def, text, 'derivatives', `derivatives[${i}][${k}]`).node))
  );
  const loads = def.coordinates.map((_, k) => `const c${k} = P[p + ${k}];`).join(' ');
  // I: the points (n × dim); R: N (n × nodes) and then dN (n × nodes × dim), from D on.
  // The result is -1 when every value is finite, -2 for a non-finite coordinate, the index into N
  // of the first non-finite N, or -3 - the index into dN of the first non-finite derivative.
  out.push(`function tabulate(I, R, n) {
const P = I;
const D = n * ${nodes};
${loop({
  body,
  outputs: [...shapeValues, ...derivValues.flat()],
  head: `const p = q * ${dim}; const o = q * ${nodes}; const d = D + q * ${nodes * dim};\n${loads}`,
  inputs: def.coordinates.map((_, k) => `c${k}`),
  inputBounds: def.coordinates.map((_, k) => magnitudeOf(k)),
  header: 'for (let q = 0; q < n; q++) {',
  checkInputs: true,
  store: (v, k) => (k < nodes ? `R[o + ${k}] = ${v};` : `R[d + ${k - nodes}] = ${v};`)
})}
if (finite) return -1;
if (fault(P, 0, n * ${dim}) >= 0) return -2;
const fN = fault(R, 0, D);
if (fN >= 0) return fN;
const fD = fault(R, D, D + n * ${nodes * dim});
return fD >= 0 ? -3 - fD : -1;
}`);

  const fields: CompiledProgram['fields'] = {};
  const missing: CompiledProgram['missing'] = {};
  const strain = def.strain;
  const custom = typeof strain === 'object' && strain !== null ? strain : null;
  const sources: Partial<Record<FieldRef, { texts: string[]; field: ExpressionField; path: string }>> = {};
  if (custom) {
    sources.B = { texts: [custom.B], field: 'B', path: 'strain.B' };
    sources.D = { texts: [custom.D], field: 'D', path: 'strain.D' };
    sources.weight = { texts: [custom.weight], field: 'weight', path: 'strain.weight' };
    sources.rigid_modes = { texts: custom.rigid_modes, field: 'rigid_modes', path: 'strain.rigid_modes' };
    if (custom.patch)
      sources['patch.displacement'] = {
        texts: custom.patch.displacement,
        field: 'patch.displacement',
        path: 'strain.patch.displacement'
      };
    else missing['patch.displacement'] = 'the custom strain block declares no patch field';
    if (custom.convergence) {
      sources['convergence.displacement'] = {
        texts: custom.convergence.displacement,
        field: 'convergence.displacement',
        path: 'strain.convergence.displacement'
      };
      sources['convergence.body_force'] = {
        texts: custom.convergence.body_force,
        field: 'convergence.body_force',
        path: 'strain.convergence.body_force'
      };
    } else {
      missing['convergence.displacement'] = missing['convergence.body_force'] =
        'the custom strain block declares no convergence field';
    }
  } else {
    for (const f of FIELD_REFS)
      missing[f] =
        `${f} belongs to a custom strain block; the built-in kind '${String(strain)}' is computed by the kernel`;
  }
  for (const ref of FIELD_REFS) {
    const src = sources[ref];
    if (!src) continue;
    const trees = src.texts.map(
      (t, k) =>
        checked(
          def,
          t,
          src.field,
          src.texts.length > 1 || ref === 'rigid_modes' || ref.includes('.') ? `${src.path}[${k}]` : src.path
        ).node
    );
    const symbols: string[] = [];
    for (const t of trees) for (const s of symbolsOf(t)) if (!symbols.includes(s)) symbols.push(s);
    const variables = new Map(symbols.map((s, k) => [s, `v${k}`] as const));
    const body = new Body(variables, new Map(symbols.map((_, k) => [`v${k}`, `m${k}`] as const)));
    const values: string[] = [];
    let rows = 0;
    let cols = 0;
    for (const t of trees) {
      const v = body.value(t);
      if (v.kind === 'scalar') {
        values.push(v.v);
        rows = trees.length;
        cols = 1;
      } else {
        values.push(...v.v);
        rows = v.rows;
        cols = v.cols;
        if (trees.length > 1) {
          rows = trees.length;
          cols = v.v.length;
        }
      }
    }
    if (trees.length > 1 && values.length % trees.length !== 0)
      throw new SandboxError('invalid', `${src.path}: entries of different sizes`);
    if (custom && ref === 'B') [rows, cols] = [custom.components.length, custom.dofs.length];
    if (custom && ref === 'D') [rows, cols] = [custom.components.length, custom.components.length];
    if (custom && (ref === 'B' || ref === 'D') && rows * cols !== values.length)
      throw new SandboxError(
        'invalid',
        `${src.path} has ${values.length} entries; ${rows} × ${cols} are needed`
      );
    const size = values.length;
    const entry = `e_${ref.replace('.', '_')}`;
    // I: (base, stride) per symbol, then every symbol's values (symbol k reads
    // I[2 × symbols + base_k + entry × stride_k], stride 0 for a constant); R: the n × size
    // results. The result is -1, or the index into R of the first non-finite value.
    const hoist = symbols
      .map(
        (_, k) =>
          `const b${k} = (I[${2 * k}] | 0) + ${2 * symbols.length}; const s${k} = I[${2 * k + 1}] | 0;`
      )
      .join(' ');
    const loads = symbols.map((_, k) => `const v${k} = I[b${k} + e * s${k}];`).join(' ');
    out.push(`function ${entry}(I, R, n) {
${hoist}
${loop({
  body,
  outputs: values,
  head: `const o = e * ${size};\n${loads}`,
  inputs: symbols.map((_, k) => `v${k}`),
  inputBounds: symbols.map((_, k) => `m${k}`),
  header: 'for (let e = 0; e < n; e++) {',
  checkInputs: false,
  store: (v, k) => `R[o + ${k}] = ${v};`
})}
return finite ? -1 : fault(R, 0, n * ${size});
}`);
    fields[ref] = { entry, symbols, size, rows, cols };
  }
  const entries = ['tabulate', ...Object.values(fields).map((f) => `${f!.entry}: ${f!.entry}`)];
  const source = `(function (M) {
'use strict';
function fault(a, from, to) { for (let i = from; i < to; i++) { const v = a[i]; if (v - v !== 0) return i - from; } return -1; }
${out.join('\n')}
return { ${entries.join(', ')} };
})`;
  return { key: programKey(def), source, nodes, dim, fields, missing };
}
