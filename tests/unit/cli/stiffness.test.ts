// The stiffness command's computation in-process, for every catalogue element on its own reference
// geometry: K is square of the right size, symmetric, and has the zero eigenvalues of its rigid-body
// modes (plus the hourglass modes of the flawed one-point element; textbook counts, from memory).
import { afterAll, describe, expect, it } from 'vitest';
import { loadCatalogue, parseFormulation } from '@isoledger/formulation';
import { symmetricEigen } from '@isoledger/kernel';
import { SandboxPool } from '@isoledger/sandbox';
import { stiffnessOf } from '@isoledger/cli';

const pool = new SandboxPool({ poolSize: 1 });
afterAll(() => pool.dispose());

/** Zero eigenvalue: below this fraction of the largest (the zero-energy-modes criterion of verification.md). */
const ZERO_EIGENVALUE = 1e-8;
const ZERO_MODES: Record<string, number> = {
  bar: 1,
  'plane-stress': 3,
  'plane-strain': 3,
  axisymmetric: 1,
  solid: 6,
  custom: 3
};

describe.each(loadCatalogue().map(({ file, source }) => [file, source]))('%s', (_file, source) => {
  const r = parseFormulation(source);
  if (!r.ok) throw new Error('does not parse');
  const def = r.definition;
  it('has a symmetric stiffness with the zero-energy modes of its kind', async () => {
    // the reference nodes as physical coordinates; axisymmetric elements moved off the axis (r from 1 to 3)
    const shift = def.strain === 'axisymmetric' ? [2, 0] : def.coordinates.map(() => 0);
    const coords = Float64Array.from(def.nodes.flatMap((p) => p.map((v, k) => v + shift[k])));
    const { K, ndof } = await stiffnessOf(def, coords, {}, pool);
    expect(K.length).toBe(ndof * ndof);
    const scale = Math.max(...Array.from(K, Math.abs));
    for (let i = 0; i < ndof; i++)
      for (let j = 0; j < i; j++)
        expect(Math.abs(K[i * ndof + j] - K[j * ndof + i]) / scale).toBeLessThan(1e-14);
    const { values } = symmetricEigen(K, ndof);
    const top = values[values.length - 1];
    const zeros = Array.from(values).filter((v) => Math.abs(v) <= ZERO_EIGENVALUE * top).length;
    const kind = typeof def.strain === 'string' ? def.strain : 'custom';
    // one-point quadrature leaves the two hourglass modes of the bilinear quadrilateral
    const expected = ZERO_MODES[kind] + (def.name === 'quad4-one-point-hourglass' ? 2 : 0);
    if (def.name === 'tri3-unity-defect') expect(zeros).toBeLessThan(ZERO_MODES[kind]);
    else expect(zeros).toBe(expected);
  });
});
