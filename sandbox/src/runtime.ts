// The script every isolate starts with: a frozen table of the math functions compiled programs may
// call, and the entry points the host reaches through references. Programs are installed once per
// key; numbers come in and go out as typed arrays whose buffers are moved, not serialised.

/**
 * Bootstrap source run once in each new isolate. The host sets `_ivm` (the isolated-vm module) just
 * before; the bootstrap keeps only its ExternalCopy class, privately, to hand result buffers back,
 * and removes the global. No host object stays reachable from the isolate.
 */
export const BOOTSTRAP = `(function () {
'use strict';
const ExternalCopy = globalThis._ivm.ExternalCopy;
delete globalThis._ivm;
const M = Object.freeze({
  sqrt: Math.sqrt, abs: Math.abs, exp: Math.exp, log: Math.log,
  sin: Math.sin, cos: Math.cos, tan: Math.tan, asin: Math.asin, acos: Math.acos, atan: Math.atan,
  sinh: Math.sinh, cosh: Math.cosh, tanh: Math.tanh, min: Math.min, max: Math.max, pow: Math.pow,
  sec: function (v) { return 1 / Math.cos(v); }, csc: function (v) { return 1 / Math.sin(v); },
  cot: function (v) { return 1 / Math.tan(v); }, sech: function (v) { return 1 / Math.cosh(v); },
  csch: function (v) { return 1 / Math.sinh(v); }, coth: function (v) { return 1 / Math.tanh(v); },
  sign: Math.sign
});
const programs = new Map();
const moveOut = function (result) {
  const out = {};
  for (const key of Object.keys(result)) {
    const v = result[key];
    out[key] = v instanceof Float64Array ? new ExternalCopy(v, { transferOut: true }) : v;
  }
  return out;
};
globalThis.__install = function (key, factory) { programs.set(key, factory(M)); return true; };
globalThis.__unload = function (key) { programs.delete(key); return true; };
globalThis.__run = function (key, entry, a, b, c) {
  const program = programs.get(key);
  if (!program) return { missing: true };
  if (entry === 'tabulate') return moveOut(program.tabulate(a, b));
  const fn = program[entry];
  if (typeof fn !== 'function') return { missing: true };
  return moveOut(fn(a, b, c));
};
})();
`;
