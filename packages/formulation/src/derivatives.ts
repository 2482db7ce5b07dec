// ∂N/∂ξ by mathjs `derivative`, then simplified. Full `simplify` is exponential in the size of a sum,
// so it runs only on small results; larger ones get mathjs `simplifyConstant` and a linear tidy pass
// (x·1, x + 0, 0·x, double negation). All of it is deterministic in the input.
import { ConstantNode, OperatorNode, derivative, simplify, simplifyConstant, type MathNode } from 'mathjs';

/** Trees up to this many nodes get mathjs `simplify` (measured here: 10–40 ms at 20 nodes, 70–300 ms at 32, seconds at 250). */
export const FULL_SIMPLIFY_NODES = 20;
/** Trees up to this many nodes get mathjs `simplifyConstant` (linear in practice). */
export const CONSTANT_FOLD_NODES = 4000;

export const countNodes = (node: MathNode) => {
  let n = 0;
  node.traverse(() => n++);
  return n;
};

const numberOf = (node: MathNode): number | null => {
  if (node.type === 'ConstantNode' && typeof (node as ConstantNode).value === 'number')
    return (node as ConstantNode).value as unknown as number;
  if (node.type === 'OperatorNode' && (node as OperatorNode).fn === 'unaryMinus') {
    const inner = numberOf((node as OperatorNode).args[0]);
    return inner === null ? null : -inner;
  }
  return null;
};
const constant = (v: number) => new ConstantNode(v);
const negate = (n: MathNode): MathNode => {
  const v = numberOf(n);
  if (v !== null) return constant(-v);
  if (n.type === 'OperatorNode' && (n as OperatorNode).fn === 'unaryMinus')
    return (n as OperatorNode).args[0];
  return new OperatorNode('-', 'unaryMinus', [n]);
};

/** One bottom-up pass removing the identities differentiation leaves behind. */
export function tidy(node: MathNode): MathNode {
  if (node.type === 'ParenthesisNode') return tidy((node as unknown as { content: MathNode }).content);
  if (node.type === 'FunctionNode') {
    const f = node as unknown as { fn: MathNode; args: MathNode[] };
    return new (node.constructor as new (fn: MathNode, args: MathNode[]) => MathNode)(f.fn, f.args.map(tidy));
  }
  if (node.type !== 'OperatorNode') return node;
  const o = node as OperatorNode;
  const args = o.args.map(tidy);
  if (args.length === 1) {
    if (o.fn === 'unaryMinus') return negate(args[0]);
    if (o.fn === 'unaryPlus') return args[0];
    return new OperatorNode(o.op, o.fn, args);
  }
  const [a, b] = args;
  const va = numberOf(a);
  const vb = numberOf(b);
  const minus = (n: MathNode) =>
    n.type === 'OperatorNode' && (n as OperatorNode).fn === 'unaryMinus' && va === null && vb === null;
  const inner = (n: MathNode) => (n as OperatorNode).args[0];
  // signs moved outwards: a + -b → a - b, -a * b → -(a * b)
  if (o.fn === 'add' && minus(b)) return new OperatorNode('-', 'subtract', [a, inner(b)]);
  if (o.fn === 'add' && minus(a)) return new OperatorNode('-', 'subtract', [b, inner(a)]);
  if (o.fn === 'subtract' && minus(b)) return new OperatorNode('+', 'add', [a, inner(b)]);
  if ((o.fn === 'multiply' || o.fn === 'divide') && minus(a))
    return negate(tidy(new OperatorNode(o.op as '*', o.fn as 'multiply', [inner(a), b])));
  if (o.fn === 'multiply' && minus(b)) return negate(tidy(new OperatorNode('*', 'multiply', [a, inner(b)])));
  switch (o.fn) {
    case 'add':
      if (va === 0) return b;
      if (vb === 0) return a;
      if (va !== null && vb !== null) return constant(va + vb);
      break;
    case 'subtract':
      if (vb === 0) return a;
      if (va === 0) return negate(b);
      if (va !== null && vb !== null) return constant(va - vb);
      break;
    case 'multiply':
      if (va === 0 || vb === 0) return constant(0);
      if (va === 1) return b;
      if (vb === 1) return a;
      if (va === -1) return negate(b);
      if (vb === -1) return negate(a);
      if (va !== null && vb !== null) return constant(va * vb);
      break;
    case 'divide':
      if (va === 0) return constant(0);
      if (vb === 1) return a;
      break;
    case 'pow':
      if (vb === 1) return a;
      if (vb === 0) return constant(1);
      break;
  }
  return new OperatorNode(o.op as '+', o.fn as 'add', [a, b]);
}

/** ∂(tree)/∂(variable), simplified within the budgets above. Throws the mathjs message when a function has no derivative. */
export function differentiate(tree: MathNode, variable: string): MathNode {
  let d = derivative(tree, variable, { simplify: false });
  if (countNodes(d) <= CONSTANT_FOLD_NODES) d = simplifyConstant(d);
  d = tidy(d);
  if (countNodes(d) <= FULL_SIMPLIFY_NODES) {
    try {
      d = tidy(simplify(d));
    } catch {
      // keep the tidied form
    }
  }
  return d;
}
