import type { ConstantNode, FunctionNode, MathNode, OperatorNode, ParenthesisNode, SymbolNode } from 'mathjs';
import { MATH_TABLE } from './limits';

/**
 * Value of a constant expression that has passed the whitelist (numbers, pi, + - * / ^, the allowed functions):
 * a plain tree walk over numbers, used for node coordinates, material values and explicit quadrature points.
 */
export function evaluateConstant(node: MathNode): number {
  switch (node.type) {
    case 'ConstantNode':
      return (node as ConstantNode).value as unknown as number;
    case 'SymbolNode':
      if ((node as SymbolNode).name === 'pi') return Math.PI;
      break;
    case 'ParenthesisNode':
      return evaluateConstant((node as ParenthesisNode).content);
    case 'OperatorNode': {
      const o = node as OperatorNode;
      const a = evaluateConstant(o.args[0]);
      if (o.fn === 'unaryMinus') return -a;
      if (o.fn === 'unaryPlus') return a;
      const b = evaluateConstant(o.args[1]);
      switch (o.fn) {
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
      break;
    }
    case 'FunctionNode': {
      const f = node as FunctionNode;
      const fn = Object.prototype.hasOwnProperty.call(MATH_TABLE, f.fn.name)
        ? MATH_TABLE[f.fn.name]
        : undefined;
      if (fn) return fn(...f.args.map(evaluateConstant));
      break;
    }
  }
  throw new Error(`not a constant expression: ${node.type}`);
}
