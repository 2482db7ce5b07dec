// Definitions are written out into the shape functions before differentiation. Sizes are computed
// before any tree is built, so a chain of definitions that doubles at every step is refused without
// ever being expanded.
import { ConstantNode, FunctionNode, OperatorNode, ParenthesisNode, SymbolNode, type MathNode } from 'mathjs';

export interface InlineHelper {
  name: string;
  kind: 'value' | 'function';
  params: string[];
  /** body with earlier definitions already written out; parameters remain symbols */
  body: MathNode;
  /** node count of `body` */
  size: number;
  /** depth of `body` */
  depth: number;
  /** how often each parameter occurs in `body` */
  occurrences: Map<string, number>;
}

/** An upper bound of the depth of `node` once the helpers are written out. */
export function inlinedDepth(node: MathNode, helpers: ReadonlyMap<string, InlineHelper>): number {
  switch (node.type) {
    case 'SymbolNode': {
      const h = helpers.get((node as SymbolNode).name);
      return h && h.kind === 'value' ? h.depth + 1 : 1;
    }
    case 'FunctionNode': {
      const f = node as FunctionNode;
      const args = f.args.map((a) => inlinedDepth(a, helpers));
      const deepest = args.length ? Math.max(...args) : 0;
      const h = helpers.get(f.fn.name);
      return (h && h.kind === 'function' ? h.depth + 1 : 1) + deepest;
    }
    default: {
      let deepest = 0;
      node.forEach((c) => (deepest = Math.max(deepest, inlinedDepth(c, helpers))));
      return deepest + 1;
    }
  }
}

/** Depth of a tree, without recursion (trees from the parser may be deep before they are checked). */
export function treeDepth(root: MathNode): number {
  let deepest = 0;
  const stack: [MathNode, number][] = [[root, 1]];
  while (stack.length) {
    const [node, depth] = stack.pop()!;
    if (depth > deepest) deepest = depth;
    node.forEach((c) => stack.push([c, depth + 1]));
  }
  return deepest;
}

/** Node count of `node` once the helpers (and parameter bindings) are written out. */
export function inlinedSize(
  node: MathNode,
  helpers: ReadonlyMap<string, InlineHelper>,
  bindings?: ReadonlyMap<string, number>
): number {
  switch (node.type) {
    case 'SymbolNode': {
      const name = (node as SymbolNode).name;
      if (bindings?.has(name)) return bindings.get(name)!;
      const h = helpers.get(name);
      return h && h.kind === 'value' ? h.size : 1;
    }
    case 'FunctionNode': {
      const f = node as FunctionNode;
      const args = f.args.map((a) => inlinedSize(a, helpers, bindings));
      const h = helpers.get(f.fn.name);
      if (h && h.kind === 'function') {
        let size = h.size;
        h.params.forEach((p, k) => {
          const n = h.occurrences.get(p) ?? 0;
          size += n * ((args[k] ?? 1) - 1);
        });
        return size;
      }
      return 1 + args.reduce((a, b) => a + b, 0);
    }
    default: {
      let size = 1;
      node.forEach((c) => (size += inlinedSize(c, helpers, bindings)));
      return size;
    }
  }
}

/** A copy of `node` with value helpers, function helpers and parameter bindings written out. */
export function inline(
  node: MathNode,
  helpers: ReadonlyMap<string, InlineHelper>,
  bindings?: ReadonlyMap<string, MathNode>
): MathNode {
  switch (node.type) {
    case 'ConstantNode':
      return new ConstantNode((node as ConstantNode).value);
    case 'SymbolNode': {
      const name = (node as SymbolNode).name;
      const bound = bindings?.get(name);
      if (bound) return new ParenthesisNode(inline(bound, new Map()));
      const h = helpers.get(name);
      if (h && h.kind === 'value') return new ParenthesisNode(inline(h.body, new Map()));
      return new SymbolNode(name);
    }
    case 'ParenthesisNode':
      return new ParenthesisNode(inline((node as ParenthesisNode).content, helpers, bindings));
    case 'OperatorNode': {
      const o = node as OperatorNode;
      return new OperatorNode(
        o.op as '+',
        o.fn as 'add',
        o.args.map((a) => inline(a, helpers, bindings)) as [MathNode, MathNode],
        o.implicit
      );
    }
    case 'FunctionNode': {
      const f = node as FunctionNode;
      const args = f.args.map((a) => inline(a, helpers, bindings));
      const h = helpers.get(f.fn.name);
      if (h && h.kind === 'function') {
        const bound = new Map(h.params.map((p, k) => [p, args[k]] as const));
        return new ParenthesisNode(inline(h.body, new Map(), bound));
      }
      return new FunctionNode(new SymbolNode(f.fn.name), args);
    }
    default:
      throw new Error(`cannot inline a ${node.type}`);
  }
}

/** How often each of `names` occurs as a plain symbol in `node`. */
export function countSymbols(node: MathNode, names: readonly string[]): Map<string, number> {
  const counts = new Map<string, number>(names.map((n) => [n, 0]));
  const walk = (n: MathNode) => {
    if (n.type === 'SymbolNode' && counts.has((n as SymbolNode).name))
      counts.set((n as SymbolNode).name, counts.get((n as SymbolNode).name)! + 1);
    if (n.type === 'FunctionNode') (n as FunctionNode).args.forEach(walk);
    else n.forEach(walk);
  };
  walk(node);
  return counts;
}
