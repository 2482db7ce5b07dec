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
 * Code that adds every computed output to one of four sums. The sums stay finite while every output
 * is finite; a NaN or an infinity makes them non-finite. A sum of finite values that overflows is a
 * false alarm, settled by the exact scan that follows any alarm. Four sums rather than one keep the
 * additions from forming one long chain.
 */
const faultTerms = (operands: string[]) =>
  operands
    .filter((v) => literalValue(v) === null)
    .map((v, k) => `a${k % 4} += ${v};`)
    .join(' ');
const FAULT_SUMS = 'let a0 = 0, a1 = 0, a2 = 0, a3 = 0;';
const FAULT_FREE = '(a0 + a1 + a2 + a3) - (a0 + a1 + a2 + a3) === 0';

const FUNCTION_NAMES: readonly string[] = [...DERIVATIVE_FUNCTIONS.keys()];

type Value =
  | { kind: 'scalar'; v: string }
  | { kind: 'matrix'; rows: number; cols: number; vector: boolean; v: string[] };

/**
 * Emits one loop body in single-assignment form: every operation a `const`, and an operation
 * written twice (the factor (1 - xi) of a dozen functions and their derivatives) computed once.
 */
class Body {
  readonly lines: string[] = [];
  private n = 0;
  private readonly seen = new Map<string, string>();
  constructor(private readonly variables: ReadonlyMap<string, string>) {}
  private temp(expr: string, key = expr): string {
    const known = this.seen.get(key);
    if (known) return known;
    const t = `t${this.n++}`;
    this.lines.push(`const ${t} = ${expr};`);
    this.seen.set(key, t);
    return t;
  }
  /** a + b and a * b: the same value whichever operand comes first, so one key for both orders. */
  private commutative(a: string, symbol: string, b: string): string {
    const [x, y] = a <= b ? [a, b] : [b, a];
    return this.temp(`${a} ${symbol} ${b}`, `${x} ${symbol} ${y}`);
  }
  /** x / 2^k as x * 2^-k: the same bits (the reciprocal of a power of two is exact), a cheaper operation. */
  private divide(a: string, b: string, divisor: number | null): string {
    if (divisor !== null && divisor !== 0 && Number.isFinite(1 / divisor)) {
      const exponent = Math.log2(Math.abs(divisor));
      if (Number.isInteger(exponent) && Math.abs(exponent) < 1000)
        return this.temp(`${a} * ${numberLiteral(1 / divisor)}`);
    }
    return this.temp(`${a} / ${b}`);
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
        return { kind: 'scalar', v: this.temp(`M.${name}(${args.join(', ')})`) };
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
        ? { kind: 'scalar', v: this.temp(`-${a.v}`) }
        : { ...a, v: a.v.map((x) => this.temp(`-${x}`)) };
    }
    const a = this.value(o.args[0]);
    const b = this.value(o.args[1]);
    const symbol = { add: '+', subtract: '-', multiply: '*', divide: '/' }[o.fn as string];
    if (a.kind === 'scalar' && b.kind === 'scalar') {
      if (o.fn === 'pow') return { kind: 'scalar', v: this.temp(`M.pow(${a.v}, ${b.v})`) };
      if (!symbol) throw new SandboxError('invalid', `the operator '${o.op}' cannot be compiled`);
      if (symbol === '+' || symbol === '*') return { kind: 'scalar', v: this.commutative(a.v, symbol, b.v) };
      if (symbol === '/') return { kind: 'scalar', v: this.divide(a.v, b.v, literalValue(b.v)) };
      return { kind: 'scalar', v: this.temp(`${a.v} ${symbol} ${b.v}`) };
    }
    if (
      (o.fn === 'add' || o.fn === 'subtract') &&
      a.kind === 'matrix' &&
      b.kind === 'matrix' &&
      a.rows === b.rows &&
      a.cols === b.cols
    )
      return { ...a, v: a.v.map((x, k) => this.temp(`${x} ${symbol} ${b.v[k]}`)) };
    if (o.fn === 'multiply' && a.kind === 'scalar' && b.kind === 'matrix')
      return { ...b, v: b.v.map((x) => this.temp(`${a.v} * ${x}`)) };
    if ((o.fn === 'multiply' || o.fn === 'divide') && a.kind === 'matrix' && b.kind === 'scalar')
      return { ...a, v: a.v.map((x) => this.temp(`${x} ${symbol} ${b.v}`)) };
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
          for (let k = 0; k < a.cols; k++) terms.push(`${a.v[i * a.cols + k]} * ${b.v[k * b.cols + j]}`);
          v.push(this.temp(terms.join(' + ')));
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

/** Compiles every expression of a definition into one program: `tabulate` and one entry per custom field. */
export function compileDefinition(def: Definition): CompiledProgram {
  const { nodes, dim } = validateShape(def);
  const out: string[] = [];
  const coordVars = new Map(def.coordinates.map((c, k) => [c, `c${k}`] as const));
  // one loop body for every shape function and derivative, so common factors are computed once per point
  const body = new Body(coordVars);
  const shapeValues = def.shape.map((text, i) =>
    body.scalar(checked(def, text, 'shape', `shape[${i}]`).node)
  );
  const derivValues = def.derivatives.map((row, i) =>
    row.map((text, k) => body.scalar(checked(def, text, 'derivatives', `derivatives[${i}][${k}]`).node))
  );
  const loads = def.coordinates.map((_, k) => `const c${k} = P[p + ${k}];`).join(' ');
  const stores = [
    ...shapeValues.map((v, i) => `N[o + ${i}] = ${v};`),
    ...derivValues.flatMap((row, i) => row.map((v, k) => `dN[d + ${i * dim + k}] = ${v};`))
  ].join('\n');
  const checks = faultTerms([...shapeValues, ...derivValues.flat()]);
  const inputChecks = def.coordinates.map((_, k) => `a${k % 4} += c${k};`).join(' ');
  // I: the points (n × dim); R: N (n × nodes) and then dN (n × nodes × dim). The result is -1 when
  // every value is finite, -2 for a non-finite coordinate, the index into N of the first non-finite
  // N, or -3 - the index into dN of the first non-finite derivative.
  out.push(`function tabulate(I, R, n) {
const P = I;
const N = R.subarray(0, n * ${nodes});
const dN = R.subarray(n * ${nodes}, n * ${nodes * (dim + 1)});
${FAULT_SUMS}
for (let q = 0; q < n; q++) {
const p = q * ${dim}; const o = q * ${nodes}; const d = q * ${nodes * dim};
${loads}
${inputChecks}
${body.lines.join('\n')}
${stores}
${checks}
}
if (${FAULT_FREE}) return -1;
if (fault(P) >= 0) return -2;
const fN = fault(N);
if (fN >= 0) return fN;
const fD = fault(dN);
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
    const body = new Body(variables);
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
    // I: L, (base, stride) per symbol, then V, every symbol's values (symbol k reads
    // V[base_k + entry × stride_k], stride 0 for a constant); R: the n × size results. The result is
    // -1, or the index into R of the first non-finite value.
    const hoist = symbols
      .map((_, k) => `const b${k} = L[${2 * k}] | 0; const s${k} = L[${2 * k + 1}] | 0;`)
      .join(' ');
    const loads = symbols.map((_, k) => `const v${k} = V[b${k} + e * s${k}];`).join(' ');
    out.push(`function ${entry}(I, R, n) {
const L = I.subarray(0, ${2 * symbols.length});
const V = I.subarray(${2 * symbols.length});
const O = R;
${hoist}
${FAULT_SUMS}
for (let e = 0; e < n; e++) {
const o = e * ${size};
${loads}
${body.lines.join('\n')}
${values.map((v, k) => `O[o + ${k}] = ${v};`).join('\n')}
${faultTerms(values)}
}
return ${FAULT_FREE} ? -1 : fault(O);
}`);
    fields[ref] = { entry, symbols, size, rows, cols };
  }
  const entries = ['tabulate', ...Object.values(fields).map((f) => `${f!.entry}: ${f!.entry}`)];
  const source = `(function (M) {
'use strict';
function fault(a) { for (let i = 0; i < a.length; i++) { const v = a[i]; if (v - v !== 0) return i; } return -1; }
${out.join('\n')}
return Object.freeze({ ${entries.join(', ')} });
})`;
  return { key: programKey(def), source, nodes, dim, fields, missing };
}
