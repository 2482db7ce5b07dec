// The script every isolate starts with: a frozen table of the math functions compiled programs may
// call, and the entry points the host reaches through references. Programs are installed once per
// key; numbers cross either through the isolate's shared arena or as moved buffers, never serialised.

/**
 * Bootstrap source run once in each new isolate. The host sets `_ivm` (the isolated-vm module) just
 * before; the bootstrap keeps only its ExternalCopy class, privately, to hand result buffers back,
 * and removes the global. No host object stays reachable from the isolate but the arena, one
 * SharedArrayBuffer handed over once.
 *
 * Two ways in: `__run` for a batch that fits the arena (the host writes the input there, the call
 * passes only numbers and returns one, the host reads the results back: nothing is created per
 * call); `__runMoved` for a larger batch, whose result buffer the host allocated and moves in, and
 * which is moved back out without a copy; its input is in the arena when it fits (I is then its
 * length), else moved in as well. A program writes every number of R, whatever R held before.
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
let A = null;
const entryOf = function (key, entry) {
  const program = programs.get(key);
  if (!program) return null;
  const fn = program[entry];
  return typeof fn === 'function' ? fn : null;
};
globalThis.__install = function (key, factory) { programs.set(key, Object.freeze(factory(M))); return true; };
globalThis.__unload = function (key) { programs.delete(key); return true; };
globalThis.__arena = function (sab) { A = new Float64Array(sab); return A.length; };
globalThis.__run = function (key, entry, inLength, outLength, n) {
  const fn = entryOf(key, entry);
  if (!fn || A === null) return 'missing';
  return fn(A.subarray(0, inLength), A.subarray(inLength, inLength + outLength), n);
};
globalThis.__runMoved = function (key, entry, I, R, n) {
  const fn = entryOf(key, entry);
  if (!fn || !(R instanceof Float64Array)) return { code: 'missing' };
  const input = typeof I === 'number' && A !== null ? A.subarray(0, I) : I;
  if (!(input instanceof Float64Array)) return { code: 'missing' };
  const code = fn(input, R, n);
  return { code: code, R: new ExternalCopy(R, { transferOut: true }) };
};
})();
`;
