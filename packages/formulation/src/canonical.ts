import { createHash } from 'node:crypto';
import {
  parse,
  type ConstantNode,
  type FunctionNode,
  type MathNode,
  type OperatorNode,
  type SymbolNode
} from 'mathjs';
import type { Definition } from './types';

/** Shortest round-trip decimal of a number; negative values in parentheses so that `(-2) ^ 2` stays what it is. */
const formatNumber = (v: number, wrap: boolean) => {
  const text = Object.is(v, -0) ? '-0' : String(v);
  return wrap && text.startsWith('-') ? `(${text})` : text;
};

const numberHandler =
  (wrap: boolean) =>
  (node: MathNode): string | undefined => {
    if (node.type === 'ConstantNode' && typeof (node as ConstantNode).value === 'number')
      return formatNumber((node as ConstantNode).value as unknown as number, wrap);
    return undefined;
  };

/** The printing forms tried in order until one parses back to the same tree. */
const FORMS = [
  { parenthesis: 'auto', wrap: false },
  { parenthesis: 'auto', wrap: true },
  { parenthesis: 'all', wrap: true }
] as const;

const unparenthesised = (node: MathNode): MathNode =>
  node.type === 'ParenthesisNode'
    ? unparenthesised((node as unknown as { content: MathNode }).content)
    : node;

/** A structural key of a tree, blind to parentheses and to implicit multiplication. */
function structure(node: MathNode): string {
  switch (node.type) {
    case 'ParenthesisNode':
      return structure((node as unknown as { content: MathNode }).content);
    case 'ConstantNode': {
      const v = (node as ConstantNode).value as unknown;
      return typeof v === 'number' ? `#${Object.is(v, -0) ? '-0' : String(v)}` : `c:${JSON.stringify(v)}`;
    }
    case 'SymbolNode':
      return `s:${(node as SymbolNode).name}`;
    case 'OperatorNode': {
      const o = node as OperatorNode;
      const operand = unparenthesised(o.args[0]);
      if (
        o.fn === 'unaryMinus' &&
        operand.type === 'ConstantNode' &&
        typeof (operand as ConstantNode).value === 'number'
      ) {
        const v = -((operand as ConstantNode).value as unknown as number);
        return `#${Object.is(v, -0) ? '-0' : String(v)}`;
      }
      return `${o.fn}(${o.args.map(structure).join(',')})`;
    }
    case 'AssignmentNode':
      return `a:${(node as unknown as { name: string }).name}=${structure((node as unknown as { value: MathNode }).value)}`;
    case 'FunctionAssignmentNode': {
      const f = node as unknown as { name: string; params: string[]; expr: MathNode };
      return `fa:${f.name}(${f.params.join(',')})=${structure(f.expr)}`;
    }
    case 'FunctionNode':
      return `f:${(node as FunctionNode).fn.name}(${(node as FunctionNode).args.map(structure).join(',')})`;
    default: {
      const parts: string[] = [];
      node.forEach((c) => parts.push(structure(c)));
      return `${node.type}(${parts.join(',')})`;
    }
  }
}

/**
 * The canonical text of an expression: mathjs printing with only the parentheses precedence needs,
 * explicit `*`, round-trip numbers. The text is parsed back and compared with the tree; should the
 * compact form ever change the meaning, every operation is parenthesised instead.
 */
export function printExpression(node: MathNode): string {
  const target = structure(node);
  for (const { parenthesis, wrap } of FORMS) {
    const text = node.toString({ parenthesis, implicit: 'show', handler: numberHandler(wrap) });
    try {
      if (structure(parse(text)) === target) return text;
    } catch {
      // try the next form
    }
  }
  throw new Error(`expression cannot be printed faithfully: ${node.toString()}`);
}

/** JSON with object keys sorted by UTF-16 code units, no white space, numbers in shortest round-trip form (RFC 8785 style). */
export function canonicalJson(value: unknown): string {
  if (value === null) return 'null';
  switch (typeof value) {
    case 'number':
      if (!Number.isFinite(value)) throw new TypeError(`canonical JSON has no form for ${value}`);
      return JSON.stringify(value);
    case 'string':
    case 'boolean':
      return JSON.stringify(value);
    case 'object': {
      if (Array.isArray(value))
        return `[${value.map((v) => (v === undefined ? 'null' : canonicalJson(v))).join(',')}]`;
      if (ArrayBuffer.isView(value)) return canonicalJson(Array.from(value as unknown as ArrayLike<number>));
      const entries = Object.keys(value as object)
        .filter((k) => (value as Record<string, unknown>)[k] !== undefined)
        .sort()
        .map((k) => `${JSON.stringify(k)}:${canonicalJson((value as Record<string, unknown>)[k])}`);
      return `{${entries.join(',')}}`;
    }
    default:
      throw new TypeError(`canonical JSON has no form for a ${typeof value}`);
  }
}

const sha256 = (text: string) => 'sha256:' + createHash('sha256').update(text, 'utf8').digest('hex');

/** sourceHash = 'sha256:' + hex of the UTF-8 source with CRLF and CR line endings normalised to LF. */
export function sourceHash(source: string): string {
  return sha256(source.replace(/\r\n?/g, '\n'));
}

/**
 * The meaning-bearing part of a definition: what the element computes. Title, summary, name, the
 * helper definitions (already inlined into `shape`) and the derived `derivatives` are left out, so
 * documentation edits and refactoring of helpers keep the hash; any change of the element changes it.
 */
export function meaningOf(def: Definition): Record<string, unknown> {
  return {
    format: def.format,
    cell: def.cell,
    coordinates: def.coordinates,
    nodes: def.nodes,
    shape: def.shape,
    strain: def.strain,
    quadrature: def.quadrature,
    material: def.material,
    thickness: def.thickness,
    area: def.area
  };
}

/** definitionHash = 'sha256:' + hex of canonicalJson(meaningOf(def)). */
export function definitionHash(def: Definition): string {
  return sha256(canonicalJson(meaningOf(def)));
}
