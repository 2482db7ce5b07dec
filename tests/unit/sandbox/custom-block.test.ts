// The catalogue's custom strain block (quad4-custom-plane-strain): its convergence body force is
// −div σ of its displacement field, its patch field has the constant strains of the MacNeal & Harder
// membrane patch, its rigid modes strain nothing, and its written-out B and D give the same stiffness
// as the kernel's built-in plane-strain kind.
import { readFileSync } from 'node:fs';
import { derivative, evaluate, parse, type MathNode } from 'mathjs';
import { afterAll, describe, expect, it } from 'vitest';
import { CATALOGUE_DIR, parseFormulation, type CustomStrain, type Definition } from '@isoledger/formulation';
import { elementStiffness, gaussRule, mapPoints, seededUniform } from '@isoledger/kernel';
import { SandboxPool } from '@isoledger/sandbox';
import { stiffnessOf } from '@isoledger/cli';

const r = parseFormulation(
  readFileSync(`${CATALOGUE_DIR}/quad4-custom-plane-strain.formulation.yaml`, 'utf8')
);
if (!r.ok) throw new Error('quad4-custom-plane-strain does not parse');
const def: Definition = r.definition;
const block = def.strain as CustomStrain;
const pool = new SandboxPool({ poolSize: 1 });
afterAll(() => pool.dispose());

/** Seeded points of the unit square, the convergence domain of verification.md. */
function unitSquarePoints(count: number, seed: number): { x: Float64Array; y: Float64Array } {
  const u = seededUniform(seed);
  const x = new Float64Array(count);
  const y = new Float64Array(count);
  for (let i = 0; i < count; i++) {
    x[i] = u();
    y[i] = u();
  }
  return { x, y };
}

/** Body force agreement: the symbolic route and the document agree to rounding of terms of size π²E. */
const BODY_FORCE_TOLERANCE = 1e-12;
/** Second differences with step 1e-4 of a field of size 1: error ≈ h² π⁴ / 12 plus ε / h² ≈ 1e-7. */
const SECOND_DIFFERENCE_TOLERANCE = 1e-5;

describe('the convergence field of the custom block', () => {
  const { E, nu } = def.material;
  const lambda = (E * nu) / ((1 + nu) * (1 - 2 * nu));
  const G = E / (2 * (1 + nu));
  const [uText, vText] = block.convergence!.displacement;
  const count = 40;
  const { x, y } = unitSquarePoints(count, 7);

  it('has the body force −div σ of its displacement, σ from the plane-strain law (derived with mathjs derivative)', async () => {
    const u: MathNode = parse(uText);
    const v: MathNode = parse(vText);
    const d = (f: MathNode, s: string) => derivative(f, s);
    // ε = (u,x, v,y, u,y + v,x); σx = (λ+2G) εx + λ εy, σy = λ εx + (λ+2G) εy, τ = G γ
    const ex = d(u, 'x');
    const ey = d(v, 'y');
    const g = d(u, 'y').toString() + ' + ' + d(v, 'x').toString();
    const sx = parse(`(${lambda + 2 * G}) * (${ex}) + (${lambda}) * (${ey})`);
    const sy = parse(`(${lambda}) * (${ex}) + (${lambda + 2 * G}) * (${ey})`);
    const t = parse(`(${G}) * (${g})`);
    const bx = parse(`-((${d(sx, 'x')}) + (${d(t, 'y')}))`);
    const by = parse(`-((${d(t, 'x')}) + (${d(sy, 'y')}))`);
    const b = await pool.evaluate(def, 'convergence.body_force', { x, y }, count);
    for (let i = 0; i < count; i++) {
      const scope = { x: x[i], y: y[i], pi: Math.PI };
      const scale = Math.PI ** 2 * E;
      expect(Math.abs(b[2 * i] - (bx.evaluate(scope) as number)) / scale).toBeLessThan(BODY_FORCE_TOLERANCE);
      expect(Math.abs(b[2 * i + 1] - (by.evaluate(scope) as number)) / scale).toBeLessThan(
        BODY_FORCE_TOLERANCE
      );
    }
  });

  it('has the same body force by central second differences of the displacement evaluated in the sandbox', async () => {
    const h = 1e-4;
    const offsets = [
      [0, 0],
      [h, 0],
      [-h, 0],
      [0, h],
      [0, -h],
      [h, h],
      [h, -h],
      [-h, h],
      [-h, -h]
    ];
    const n = count * offsets.length;
    const px = new Float64Array(n);
    const py = new Float64Array(n);
    for (let i = 0; i < count; i++)
      offsets.forEach(([ox, oy], k) => {
        px[i * offsets.length + k] = x[i] + ox;
        py[i * offsets.length + k] = y[i] + oy;
      });
    const w = await pool.evaluate(def, 'convergence.displacement', { x: px, y: py }, n);
    const b = await pool.evaluate(def, 'convergence.body_force', { x, y }, count);
    const at = (i: number, k: number, c: number) => w[(i * offsets.length + k) * 2 + c];
    for (let i = 0; i < count; i++) {
      const second = (c: number) => ({
        xx: (at(i, 1, c) - 2 * at(i, 0, c) + at(i, 2, c)) / (h * h),
        yy: (at(i, 3, c) - 2 * at(i, 0, c) + at(i, 4, c)) / (h * h),
        xy: (at(i, 5, c) - at(i, 6, c) - at(i, 7, c) + at(i, 8, c)) / (4 * h * h)
      });
      const U = second(0);
      const V = second(1);
      // −div σ for plane strain: bx = −[(λ+2G) u,xx + G u,yy + (λ+G) v,xy], by = −[(λ+2G) v,yy + G v,xx + (λ+G) u,xy]
      const bx = -((lambda + 2 * G) * U.xx + G * U.yy + (lambda + G) * V.xy);
      const by = -((lambda + 2 * G) * V.yy + G * V.xx + (lambda + G) * U.xy);
      expect(Math.abs(b[2 * i] - bx)).toBeLessThan(SECOND_DIFFERENCE_TOLERANCE);
      expect(Math.abs(b[2 * i + 1] - by)).toBeLessThan(SECOND_DIFFERENCE_TOLERANCE);
    }
  });

  it('vanishes on the boundary of the unit square, as the convergence check needs', async () => {
    const s = new Float64Array([0, 0.3, 1, 0.7]);
    const t = new Float64Array([0.4, 0, 0.2, 1]);
    const w = await pool.evaluate(def, 'convergence.displacement', { x: s, y: t }, 4);
    for (const value of w) expect(Math.abs(value)).toBeLessThan(1e-15);
  });
});

describe('the patch field of the custom block', () => {
  it('has εx = εy = γxy = 1e-3 everywhere, the MacNeal & Harder (1985) membrane patch state', async () => {
    const [u, v] = block.patch!.displacement.map((s): MathNode => parse(s));
    const { x, y } = unitSquarePoints(10, 3);
    for (let i = 0; i < 10; i++) {
      const scope = { x: x[i], y: y[i] };
      expect(evaluate(derivative(u, 'x').toString(), scope)).toBeCloseTo(1e-3, 15);
      expect(evaluate(derivative(v, 'y').toString(), scope)).toBeCloseTo(1e-3, 15);
      expect(
        (evaluate(derivative(u, 'y').toString(), scope) as number) +
          (evaluate(derivative(v, 'x').toString(), scope) as number)
      ).toBeCloseTo(1e-3, 15);
    }
  });
});

/** A distorted, convex four-node element (counter-clockwise). */
const COORDS = new Float64Array([0, 0, 2.2, 0.1, 1.9, 1.4, 0.3, 1.1]);
/** Strain of a rigid mode relative to |B|·|x|: rounding only. */
const RIGID_STRAIN_TOLERANCE = 1e-13;

describe('the rigid modes of the custom block', () => {
  it('produce zero strain through the written-out B at every Gauss point of a distorted element', async () => {
    const rule = gaussRule('quadrilateral', 2);
    const tab = await pool.tabulate(def, rule.points);
    const geom = mapPoints(tab, COORDS);
    const nodes = 4;
    const count = rule.count * nodes;
    const dNdx = new Float64Array(count);
    const dNdy = new Float64Array(count);
    for (let e = 0; e < count; e++) {
      dNdx[e] = geom.dNdx[e * 2];
      dNdy[e] = geom.dNdx[e * 2 + 1];
    }
    const B = await pool.evaluate(def, 'B', { dNdx, dNdy }, count, { nodes });
    const modes = await pool.evaluate(
      def,
      'rigid_modes',
      { x: COORDS.filter((_, k) => k % 2 === 0), y: COORDS.filter((_, k) => k % 2 === 1) },
      nodes
    );
    const nm = block.rigid_modes.length;
    for (let m = 0; m < nm; m++)
      for (let q = 0; q < rule.count; q++)
        for (let c = 0; c < 3; c++) {
          let strain = 0;
          let scale = 0;
          for (let i = 0; i < nodes; i++)
            for (let dof = 0; dof < 2; dof++) {
              const b = B[((q * nodes + i) * 3 + c) * 2 + dof];
              const u = modes[(i * nm + m) * 2 + dof];
              strain += b * u;
              scale += Math.abs(b * u);
            }
          expect(Math.abs(strain)).toBeLessThanOrEqual(RIGID_STRAIN_TOLERANCE * Math.max(1, scale));
        }
  });
});

describe('the written-out block against the kernel', () => {
  it('gives the stiffness of the built-in plane-strain kind for a distorted element (two independent routes)', async () => {
    const custom = await stiffnessOf(def, COORDS, {}, pool);
    const builtin = elementStiffness(
      'plane-strain',
      await pool.tabulate(def, gaussRule('quadrilateral', 2).points),
      gaussRule('quadrilateral', 2).weights,
      COORDS,
      def.material,
      { thickness: 1 }
    );
    expect(custom.ndof).toBe(8);
    const norm = Math.max(...Array.from(builtin, Math.abs));
    custom.K.forEach((v, k) => expect(Math.abs(v - builtin[k]) / norm).toBeLessThan(1e-13));
  });
});
