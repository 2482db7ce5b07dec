// Expressions: parsed with mathjs `parse`, then accepted only when every node of the tree is on the
// whitelist of its field. Problems carry the 0-based index inside the expression text; the document
// layer turns that into a line and column of the source.
import {
  parse,
  type AccessorNode,
  type ArrayNode,
  type AssignmentNode,
  type BlockNode,
  type ConditionalNode,
  type ConstantNode,
  type FunctionAssignmentNode,
  type FunctionNode,
  type MathNode,
  type OperatorNode,
  type ParenthesisNode,
  type RangeNode,
  type RelationalNode,
  type SymbolNode
} from 'mathjs';
import { treeDepth } from './inline';
import { FORMAT_LIMITS, type Arity } from './limits';
import { describeCharacter, printable } from './symbols';
import { tokenize, type Token } from './tokens';

export interface ExpressionProblem {
  /** 0-based index in the expression text */
  index: number;
  message: string;
}

/** A definition visible to later expressions. */
export interface Helper {
  name: string;
  kind: 'value' | 'function';
  params: string[];
  /** where it is defined, for messages: `definitions[2]` */
  path: string;
  /** false while checking definitions that come before it (a forward reference) */
  visible: boolean;
}

export interface ExpressionPolicy {
  /** plain symbols the field allows */
  symbols: ReadonlySet<string>;
  /** completes "unknown symbol 'zeta': …", e.g. "a triangle has coordinates xi, eta" */
  symbolHint: string;
  functions: ReadonlyMap<string, Arity>;
  helpers?: ReadonlyMap<string, Helper>;
  /** matrix literals allowed (B, D, rigid_modes) */
  matrices: boolean;
  /** the root must be an assignment (definitions) */
  assignment: boolean;
  /** exponents must be constants of bounded size (shape functions and definitions, which are differentiated) */
  constantExponents: boolean;
  /** the name of the definition being checked, to refuse recursion */
  self?: string;
  /** function parameters visible in the body */
  params?: ReadonlySet<string>;
  /** the field's name for messages: "matrix literals are allowed only in B, D and rigid_modes" */
  fieldLabel: string;
  /** nesting nodes allowed on one path (default: the author's limit, 64) */
  maxNesting?: number;
}

/** Shape of an expression's value: a scalar, or a matrix rows × cols (`vector` when written as a 1-D list). */
export type ValueShape = { kind: 'scalar' } | { kind: 'matrix'; rows: number; cols: number; vector: boolean };

const utf8Length = (s: string) => new TextEncoder().encode(s).length;

const OPENERS = new Set(['(', '[', '{']);
const CLOSERS = new Set([')', ']', '}']);

/** Bracket nesting before parsing: the recursive-descent parser must never see more than the limit. */
function bracketDepthProblem(text: string, limit: number = FORMAT_LIMITS.nesting): ExpressionProblem | null {
  let depth = 0;
  let quote: string | null = null;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (quote) {
      if (c === '\\') i++;
      else if (c === quote) quote = null;
      continue;
    }
    if (c === '"') quote = c;
    else if (OPENERS.has(c)) {
      depth++;
      if (depth > limit)
        return { index: i, message: `expression nesting exceeds ${limit} levels of brackets` };
    } else if (CLOSERS.has(c)) depth = Math.max(0, depth - 1);
  }
  return null;
}

/** mathjs messages end with "(char 12)"; the column is reported separately. */
const cleanSyntaxMessage = (message: string) =>
  message
    .replace(/\s*\(char \d+\)\s*$/, '')
    .replace(/^Syntax error in part "(.*)"$/s, (_, part: string) => `cannot read "${printable(part, 24)}"`);

export interface ParsedText {
  node: MathNode | null;
  problems: ExpressionProblem[];
  /** index of the first non-blank character */
  start: number;
}

/** Static limits applied before and right after mathjs reads an expression. */
export interface TextLimits {
  /** UTF-8 bytes */
  bytes: number;
  /** bracket nesting */
  nesting: number;
  /** depth of the syntax tree */
  depth: number;
  /** nesting nodes (brackets, calls, unary signs, powers) on one path */
  nodes: number;
}

/** What an author may write in one expression (formulation-format.md, "Limits"). */
export const AUTHOR_LIMITS: TextLimits = Object.freeze({
  bytes: FORMAT_LIMITS.expressionBytes,
  nesting: FORMAT_LIMITS.nesting,
  depth: FORMAT_LIMITS.treeDepth,
  nodes: FORMAT_LIMITS.nesting
});

/** Bracket nesting of an expression text (strings skipped). */
export function bracketDepth(text: string): number {
  let depth = 0;
  let deepest = 0;
  let quote: string | null = null;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (quote) {
      if (c === '\\') i++;
      else if (c === quote) quote = null;
    } else if (c === '"') quote = c;
    else if (OPENERS.has(c)) deepest = Math.max(deepest, ++depth);
    else if (CLOSERS.has(c)) depth = Math.max(0, depth - 1);
  }
  return deepest;
}

/** Parses one expression with mathjs after the static limits (size, bracket nesting); syntax errors carry their index. */
export function parseExpressionText(text: string, limits: TextLimits = AUTHOR_LIMITS): ParsedText {
  const start = Math.max(0, text.search(/\S/));
  const bytes = utf8Length(text);
  if (bytes > limits.bytes)
    return {
      node: null,
      start,
      problems: [{ index: start, message: `expression is ${bytes} bytes; the limit is ${limits.bytes}` }]
    };
  if (text.trim() === '') return { node: null, start, problems: [{ index: 0, message: 'empty expression' }] };
  const depth = bracketDepthProblem(text, limits.nesting);
  if (depth) return { node: null, start, problems: [depth] };
  try {
    const node = parse(text.trimEnd());
    if (treeDepth(node) > limits.depth)
      return {
        node: null,
        start,
        problems: [
          {
            index: start,
            message: `expression is nested ${treeDepth(node)} levels deep; the limit is ${limits.depth}`
          }
        ]
      };
    if (nestingDepth(node) > limits.nodes)
      return {
        node: null,
        start,
        problems: [
          {
            index: start,
            message: `expression nesting exceeds ${limits.nodes} levels of brackets, function calls, unary signs and powers`
          }
        ]
      };
    return { node, start, problems: [] };
  } catch (error) {
    if (error instanceof RangeError)
      return {
        node: null,
        start,
        problems: [
          { index: start, message: `expression nesting is too deep (limit ${FORMAT_LIMITS.nesting})` }
        ]
      };
    const e = error as Error & { char?: number };
    const index = typeof e.char === 'number' ? Math.max(0, e.char - 1) : start;
    const ch = text[index];
    let message = `syntax error: ${cleanSyntaxMessage(e.message ?? String(error))}`;
    if (ch !== undefined && (ch.codePointAt(0)! > 0x7e || ch.codePointAt(0)! < 0x20) && !/\s/.test(ch))
      message = `syntax error: unexpected character ${describeCharacter(String.fromCodePoint(text.codePointAt(index)!))}`;
    return { node: null, start, problems: [{ index, message }] };
  }
}

// ---------------------------------------------------------------------------------------------
// Where each node was written

const tokenKey = (t: Token, nested: boolean): string => {
  switch (t.kind) {
    case 'string':
      return 'string';
    case 'number':
      return Number.isFinite(Number(t.text)) ? 'number' : 'nonfinite';
    case 'open-matrix':
      return nested ? 'matrix-inner' : 'matrix';
    case 'open-index':
      return 'index';
    case 'name':
      return t.text === 'NaN' || t.text === 'Infinity' ? 'nonfinite' : `t:${t.text}`;
    case 'symbol':
      return `t:${t.text}`;
  }
};

const POSTFIX = new Set(['factorial', 'ctranspose', 'transpose']);

/** Index of the token where each node was written (its operator, name or opening bracket) and of its subtree's first token. */
export class Locator {
  private readonly own = new Map<MathNode, number>();
  private readonly first = new Map<MathNode, number>();
  constructor(
    root: MathNode,
    text: string,
    private readonly fallback: number
  ) {
    const tokens = tokenize(text);
    const byKey = new Map<string, number[]>();
    const stack: string[] = [];
    for (const t of tokens) {
      const nested = t.kind === 'open-matrix' && stack[stack.length - 1] === 'matrix';
      const key = tokenKey(t, nested);
      if (!byKey.has(key)) byKey.set(key, []);
      byKey.get(key)!.push(t.start);
      if (t.kind === 'open-matrix') stack.push('matrix');
      else if (t.kind === 'open-index' || t.text === '(' || t.text === '{') stack.push('other');
      else if (CLOSERS.has(t.text)) stack.pop();
    }
    const seen = new Map<string, number>();
    const claim = (node: MathNode | null, key: string): number | undefined => {
      const k = seen.get(key) ?? 0;
      seen.set(key, k + 1);
      const at = byKey.get(key)?.[k];
      if (node && at !== undefined) this.own.set(node, at);
      return at;
    };
    const visit = (node: MathNode, insideArray: boolean): number | undefined => {
      const starts: (number | undefined)[] = [];
      const child = (n: MathNode | undefined | null, inArray = false) => {
        if (n) starts.push(visit(n, inArray));
      };
      switch (node.type) {
        case 'SymbolNode':
          starts.push(claim(node, `t:${(node as SymbolNode).name}`));
          break;
        case 'ConstantNode': {
          const v = (node as ConstantNode).value as unknown;
          if (typeof v === 'number') starts.push(claim(node, Number.isFinite(v) ? 'number' : 'nonfinite'));
          else if (typeof v === 'string') starts.push(claim(node, 'string'));
          else starts.push(claim(node, `t:${String(v)}`));
          break;
        }
        case 'FunctionNode': {
          const f = node as FunctionNode;
          if (f.fn.type === 'SymbolNode') starts.push(claim(node, `t:${(f.fn as SymbolNode).name}`));
          else child(f.fn as MathNode);
          claim(null, 't:(');
          for (const a of f.args) child(a);
          break;
        }
        case 'OperatorNode': {
          const o = node as OperatorNode & { isPercentage?: boolean };
          const key = o.isPercentage ? 't:%' : `t:${o.op}`;
          if (o.implicit) for (const a of o.args) child(a);
          else if (o.args.length === 1 && POSTFIX.has(o.fn)) {
            child(o.args[0]);
            claim(node, key);
          } else if (o.args.length === 1) {
            starts.push(claim(node, key));
            child(o.args[0]);
          } else if (o.isPercentage) {
            child(o.args[0]);
            claim(node, key);
          } else {
            o.args.forEach((a, k) => {
              if (k > 0) starts.push(claim(node, key));
              child(a);
            });
          }
          break;
        }
        case 'ParenthesisNode':
          starts.push(claim(node, 't:('));
          child((node as ParenthesisNode).content);
          break;
        case 'ArrayNode':
          if (!insideArray) starts.push(claim(node, 'matrix'));
          for (const item of (node as ArrayNode).items) child(item, true);
          break;
        case 'AccessorNode': {
          const a = node as AccessorNode;
          child(a.object);
          const dot = (a.index as unknown as { dotNotation?: boolean }).dotNotation;
          starts.push(claim(node, dot ? 't:.' : 'index'));
          if (!dot) for (const d of a.index.dimensions) child(d);
          break;
        }
        case 'ObjectNode':
          starts.push(claim(node, 't:{'));
          break;
        case 'RangeNode': {
          const r = node as RangeNode;
          child(r.start);
          starts.push(claim(node, 't::'));
          if (r.step) {
            child(r.step);
            claim(null, 't::');
          }
          child(r.end);
          break;
        }
        case 'ConditionalNode': {
          const c = node as ConditionalNode;
          child(c.condition);
          starts.push(claim(node, 't:?'));
          child(c.trueExpr);
          claim(null, 't::');
          child(c.falseExpr);
          break;
        }
        case 'RelationalNode': {
          const r = node as RelationalNode;
          r.params.forEach((p, k) => {
            if (k > 0) starts.push(claim(k === 1 ? node : null, `t:${operatorText(r.conditionals[k - 1])}`));
            child(p);
          });
          break;
        }
        case 'AssignmentNode': {
          const a = node as AssignmentNode;
          child(a.object);
          if (a.index) for (const d of a.index.dimensions) child(d);
          starts.push(claim(node, 't:='));
          child(a.value);
          break;
        }
        case 'FunctionAssignmentNode': {
          const f = node as FunctionAssignmentNode;
          starts.push(claim(null, `t:${f.name}`));
          claim(null, 't:(');
          for (const p of f.params) claim(null, `t:${p}`);
          starts.push(claim(node, 't:='));
          child(f.expr);
          break;
        }
        case 'BlockNode':
          for (const b of (node as BlockNode).blocks) child(b.node);
          break;
        default:
          node.forEach((c) => child(c));
      }
      const defined = starts.filter((s): s is number => s !== undefined);
      const min = defined.length ? Math.min(...defined) : undefined;
      if (min !== undefined) this.first.set(node, min);
      return min;
    };
    visit(root, false);
  }
  /** The index of the node's own token, else its first token, else the expression's start. */
  at(node: MathNode): number {
    return this.own.get(node) ?? this.first.get(node) ?? this.fallback;
  }
  /** The index of the subtree's first token. */
  start(node: MathNode): number {
    return this.first.get(node) ?? this.own.get(node) ?? this.fallback;
  }
}

const RELATIONAL: Record<string, string> = {
  equal: '==',
  unequal: '!=',
  smaller: '<',
  larger: '>',
  smallerEq: '<=',
  largerEq: '>='
};
const operatorText = (fn: string) => RELATIONAL[fn] ?? fn;

/** The most nesting nodes (see NESTING) on any path from the root, without recursion. */
function nestingDepth(root: MathNode): number {
  let deepest = 0;
  const stack: [MathNode, number][] = [[root, 0]];
  while (stack.length) {
    const [node, outer] = stack.pop()!;
    const depth = NESTING(node) ? outer + 1 : outer;
    if (depth > deepest) deepest = depth;
    node.forEach((c) => stack.push([c, depth]));
  }
  return deepest;
}

// ---------------------------------------------------------------------------------------------
// The whitelist

const BINARY = new Set(['add', 'subtract', 'multiply', 'divide', 'pow']);
const UNARY = new Set(['unaryMinus', 'unaryPlus']);

export interface CheckResult {
  problems: ExpressionProblem[];
  shape: ValueShape | null;
  /** helpers referenced (values and functions), for inlining */
  uses: Set<string>;
}

const SCALAR: ValueShape = { kind: 'scalar' };
const describeShape = (s: ValueShape) =>
  s.kind === 'scalar' ? 'a scalar' : `a ${s.rows} × ${s.cols} matrix`;

/** Nodes that the recursive-descent parser nests: counted against the nesting limit. */
function NESTING(node: MathNode): boolean {
  return (
    node.type === 'ParenthesisNode' ||
    node.type === 'FunctionNode' ||
    node.type === 'ArrayNode' ||
    (node.type === 'OperatorNode' &&
      ((node as OperatorNode).args.length === 1 || (node as OperatorNode).fn === 'pow'))
  );
}

/** Does the subtree use only numbers, `pi` and function calls on them? */
function isConstant(node: MathNode): boolean {
  let plain = true;
  const walk = (n: MathNode) => {
    if (n.type === 'SymbolNode' && (n as SymbolNode).name !== 'pi') plain = false;
    else if (n.type === 'FunctionNode') for (const a of (n as FunctionNode).args) walk(a);
    else n.forEach((c) => walk(c));
  };
  walk(node);
  return plain;
}

/** Checks every node of a parsed expression against the field's whitelist; infers the shape of its value. */
export function checkExpression(
  root: MathNode,
  text: string,
  policy: ExpressionPolicy,
  locator?: Locator
): CheckResult {
  const loc = locator ?? new Locator(root, text, Math.max(0, text.search(/\S/)));
  const problems: ExpressionProblem[] = [];
  const uses = new Set<string>();
  const refuse = (node: MathNode, message: string, index = loc.at(node)) => problems.push({ index, message });
  const allowedFunctions = () => [...policy.functions.keys()].join(', ');

  let body = root;
  if (policy.assignment) {
    if (
      root.type === 'AssignmentNode' &&
      (root as AssignmentNode).object.type === 'SymbolNode' &&
      !(root as AssignmentNode).index
    ) {
      body = (root as AssignmentNode).value;
    } else if (root.type === 'FunctionAssignmentNode') {
      body = (root as FunctionAssignmentNode).expr;
    } else {
      refuse(
        root,
        "a definition must be an assignment 'name = expression' or a one-line function 'name(s) = expression'",
        loc.start(root)
      );
      return { problems, shape: null, uses };
    }
  }

  const visit = (node: MathNode, depth: number): ValueShape | null => {
    const d = NESTING(node) ? depth + 1 : depth;
    if (d > (policy.maxNesting ?? FORMAT_LIMITS.nesting)) {
      refuse(node, `expression nesting exceeds ${policy.maxNesting ?? FORMAT_LIMITS.nesting} levels`);
      return null;
    }
    switch (node.type) {
      case 'ConstantNode': {
        const v = (node as ConstantNode).value as unknown;
        if (typeof v === 'number') {
          if (Number.isFinite(v)) return SCALAR;
          refuse(node, `the number is not finite (${String(v)}); only finite numbers are allowed`);
          return null;
        }
        if (typeof v === 'string') refuse(node, 'strings are not allowed in expressions');
        else refuse(node, `'${String(v)}' is not a number; only numbers are allowed`);
        return null;
      }
      case 'SymbolNode': {
        const name = (node as SymbolNode).name;
        if (policy.params?.has(name)) return SCALAR;
        if (policy.symbols.has(name)) return SCALAR;
        const helper = policy.helpers?.get(name);
        if (name === policy.self) {
          refuse(node, `'${name}' refers to itself: definitions cannot be recursive`);
          return null;
        }
        if (helper) {
          if (!helper.visible) {
            refuse(
              node,
              `'${name}' is defined later (${helper.path}); a definition may use only the definitions before it`
            );
            return null;
          }
          if (helper.kind === 'function') {
            refuse(
              node,
              `'${name}' is a function of ${helper.params.length} argument${helper.params.length === 1 ? '' : 's'}; call it as ${name}(…)`
            );
            return null;
          }
          uses.add(name);
          return SCALAR;
        }
        if (policy.functions.has(name)) {
          refuse(node, `'${name}' is a function; call it as ${name}(…)`);
          return null;
        }
        const odd = [...name].find((ch) => ch.codePointAt(0)! > 0x7e);
        const detail = odd ? ` (it contains the non-ASCII character ${describeCharacter(odd)})` : '';
        refuse(node, `unknown symbol '${printable(name)}'${detail}: ${policy.symbolHint}`);
        return null;
      }
      case 'ParenthesisNode':
        return visit((node as ParenthesisNode).content, d);
      case 'OperatorNode': {
        const o = node as OperatorNode & { isPercentage?: boolean };
        if (o.isPercentage) {
          refuse(node, "'%' is not allowed; expressions may use + - * / ^ and unary minus");
          return null;
        }
        if (o.args.length === 1 && UNARY.has(o.fn)) return visit(o.args[0], d);
        if (o.args.length !== 2 || !BINARY.has(o.fn)) {
          refuse(node, `operator '${o.op}' is not allowed; expressions may use + - * / ^ and unary minus`);
          return null;
        }
        if (o.fn === 'pow' && policy.constantExponents) {
          const exponentProblem = constantExponentProblem(o.args[1]);
          if (exponentProblem) {
            refuse(node, exponentProblem);
            return null;
          }
        }
        const a = visit(o.args[0], d);
        const b = visit(o.args[1], d);
        if (!a || !b) return null;
        return combine(o, a, b);
      }
      case 'FunctionNode': {
        const f = node as FunctionNode;
        if (f.fn.type !== 'SymbolNode') {
          refuse(node, 'only named functions may be called');
          return null;
        }
        const name = (f.fn as SymbolNode).name;
        const helper = policy.helpers?.get(name);
        let arity: Arity | undefined;
        if (name === policy.self) {
          refuse(node, `'${name}' calls itself: definitions cannot be recursive`);
          return null;
        }
        if (helper) {
          if (!helper.visible) {
            refuse(
              node,
              `'${name}' is defined later (${helper.path}); a definition may use only the definitions before it`
            );
            return null;
          }
          if (helper.kind === 'value') {
            refuse(node, `'${name}' is a value, not a function; write it without arguments`);
            return null;
          }
          arity = { min: helper.params.length, max: helper.params.length };
          uses.add(name);
        } else arity = policy.functions.get(name);
        if (!arity) {
          refuse(
            node,
            `function '${printable(name)}' is not allowed; the allowed functions are ${allowedFunctions()}`
          );
          return null;
        }
        if (f.args.length < arity.min || f.args.length > arity.max) {
          const expected = arity.min === arity.max ? `${arity.min}` : `${arity.min} to ${arity.max}`;
          refuse(
            node,
            `${name} takes ${expected} argument${arity.max === 1 ? '' : 's'}, got ${f.args.length}`
          );
          return null;
        }
        let ok = true;
        for (const a of f.args) {
          const s = visit(a, d);
          if (!s) ok = false;
          else if (s.kind !== 'scalar') {
            refuse(a, `${name} takes numbers, not a matrix`, loc.start(a));
            ok = false;
          }
        }
        return ok ? SCALAR : null;
      }
      case 'ArrayNode':
        return matrix(node as ArrayNode, d);
      case 'AssignmentNode':
      case 'FunctionAssignmentNode':
        refuse(node, "assignment '=' is allowed only in definitions");
        return null;
      case 'AccessorNode': {
        const a = node as AccessorNode;
        const idx = a.index as unknown as { dotNotation?: boolean; dimensions: MathNode[] };
        if (idx.dotNotation) {
          const prop = idx.dimensions[0] as ConstantNode;
          refuse(node, `property access '.${printable(String(prop?.value ?? ''))}' is not allowed`);
        } else refuse(node, "index access '[…]' is not allowed");
        return null;
      }
      case 'ObjectNode':
        refuse(node, "objects '{…}' are not allowed");
        return null;
      case 'RangeNode':
        refuse(node, "ranges 'a:b' are not allowed");
        return null;
      case 'ConditionalNode':
        refuse(node, "conditional expressions '? :' are not allowed");
        return null;
      case 'RelationalNode':
        refuse(node, 'comparisons are not allowed');
        return null;
      case 'BlockNode': {
        const blocks = (node as BlockNode).blocks;
        const second = blocks[1]?.node;
        refuse(
          node,
          "an expression must be a single statement (found ';' or a line break between two expressions)",
          second ? loc.start(second) : loc.start(node)
        );
        return null;
      }
      default:
        refuse(node, `'${node.type}' is not allowed in expressions`);
        return null;
    }
  };

  const matrix = (node: ArrayNode, depth: number): ValueShape | null => {
    if (!policy.matrices) {
      refuse(node, `matrix literals are allowed only in B, D and rigid_modes, not in ${policy.fieldLabel}`);
      return null;
    }
    const items = node.items;
    if (items.length === 0) {
      refuse(node, 'empty matrix');
      return null;
    }
    const nested = items.filter((i) => i.type === 'ArrayNode').length;
    if (nested === 0) {
      let ok = true;
      for (const item of items) {
        const s = visit(item, depth);
        if (!s) ok = false;
        else if (s.kind !== 'scalar') {
          refuse(item, 'matrix entries must be numbers or scalar expressions', loc.start(item));
          ok = false;
        }
      }
      return ok ? { kind: 'matrix', rows: 1, cols: items.length, vector: true } : null;
    }
    if (nested !== items.length) {
      refuse(node, 'a matrix must be a list of rows, each a list of entries');
      return null;
    }
    const cols = (items[0] as ArrayNode).items.length;
    let ok = true;
    for (const row of items as ArrayNode[]) {
      if (row.items.length !== cols) {
        refuse(node, `the rows of a matrix must have the same length (${cols} and ${row.items.length})`);
        return null;
      }
      for (const item of row.items) {
        if (item.type === 'ArrayNode') {
          refuse(item, 'a matrix has two dimensions at most', loc.start(item));
          ok = false;
          continue;
        }
        const s = visit(item, depth + 1);
        if (!s) ok = false;
        else if (s.kind !== 'scalar') {
          refuse(item, 'matrix entries must be numbers or scalar expressions', loc.start(item));
          ok = false;
        }
      }
    }
    return ok ? { kind: 'matrix', rows: items.length, cols, vector: false } : null;
  };

  const combine = (o: OperatorNode, a: ValueShape, b: ValueShape): ValueShape | null => {
    if (a.kind === 'scalar' && b.kind === 'scalar') return SCALAR;
    switch (o.fn) {
      case 'add':
      case 'subtract':
        if (a.kind === 'matrix' && b.kind === 'matrix' && a.rows === b.rows && a.cols === b.cols) return a;
        refuse(
          o,
          `cannot ${o.fn === 'add' ? 'add' : 'subtract'} ${describeShape(a)} and ${describeShape(b)}`
        );
        return null;
      case 'multiply':
        if (a.kind === 'scalar') return b;
        if (b.kind === 'scalar') return a;
        if (a.vector || b.vector) {
          refuse(
            o,
            'a product of matrices needs two-dimensional matrices; write vectors as [a; b] or [a, b] with rows'
          );
          return null;
        }
        if (a.cols === b.rows) return { kind: 'matrix', rows: a.rows, cols: b.cols, vector: false };
        refuse(o, `cannot multiply ${describeShape(a)} by ${describeShape(b)}`);
        return null;
      case 'divide':
        if (b.kind === 'scalar') return a;
        refuse(o, 'cannot divide by a matrix');
        return null;
      default:
        refuse(o, "'^' applies to numbers only, not to matrices");
        return null;
    }
  };

  const shape = visit(body, 0);
  return { problems, shape: problems.length === 0 ? shape : null, uses };
}

/** Shape functions are differentiated symbolically: exponents must be constants of bounded size. */
function constantExponentProblem(exponent: MathNode): string | null {
  if (!isConstant(exponent))
    return "the exponent of '^' must be a constant in shape functions and definitions";
  const value = constantValue(exponent);
  if (value !== null && Math.abs(value) > FORMAT_LIMITS.shapeExponent)
    return `the exponent ${value} is too large; shape functions and definitions allow exponents up to ${FORMAT_LIMITS.shapeExponent} in magnitude`;
  return null;
}

/** Numeric value of a constant subtree (numbers, pi, + - * / ^), or null when it uses anything else. */
function constantValue(node: MathNode): number | null {
  switch (node.type) {
    case 'ConstantNode': {
      const v = (node as ConstantNode).value as unknown;
      return typeof v === 'number' ? v : null;
    }
    case 'SymbolNode':
      return (node as SymbolNode).name === 'pi' ? Math.PI : null;
    case 'ParenthesisNode':
      return constantValue((node as ParenthesisNode).content);
    case 'OperatorNode': {
      const o = node as OperatorNode;
      const vals = o.args.map(constantValue);
      if (vals.some((v) => v === null)) return null;
      const [a, b] = vals as number[];
      switch (o.fn) {
        case 'unaryMinus':
          return -a;
        case 'unaryPlus':
          return a;
        case 'add':
          return a + b;
        case 'subtract':
          return a - b;
        case 'multiply':
          return a * b;
        case 'divide':
          return a / b;
        case 'pow':
          return Math.pow(a, b);
      }
      return null;
    }
    default:
      return null;
  }
}
