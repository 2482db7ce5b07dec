import fc from 'fast-check';

/** Random expressions over xi and eta in mathjs syntax, written with redundant spacing and parentheses. */
export const expressionText: fc.Arbitrary<string> = fc.letrec<{ e: string }>((tie) => ({
  e: fc.oneof(
    { depthSize: 'small', withCrossShrink: true },
    fc.constantFrom('xi', 'eta', 'pi'),
    fc.double({ min: 0, max: 100, noNaN: true }).map((v) => String(v)),
    fc.integer({ min: 0, max: 9 }).map(String),
    fc
      .tuple(tie('e'), fc.constantFrom('+', '-', '*', '/'), tie('e'))
      .map(([a, op, b]) => `(${a}) ${op} (${b})`),
    fc.tuple(tie('e'), fc.integer({ min: 0, max: 4 })).map(([a, n]) => `(${a})^${n}`),
    tie('e').map((a) => `-(${a})`),
    fc
      .tuple(fc.constantFrom('sin', 'cos', 'exp', 'abs', 'atan', 'tanh'), tie('e'))
      .map(([f, a]) => `${f}(${a})`)
  )
})).e;
