// `isoledger stiffness FILE --coords '[[x, y], …]'`: the element stiffness of one physical element,
// shape functions tabulated in the sandbox at the document's quadrature points, K by the kernel.
import { parseArgs } from 'node:util';
import { parseFormulation, type Definition } from '@isoledger/formulation';
import {
  elementStiffness,
  explicitRule,
  gaussRule,
  mapPoints,
  simplexRule,
  stiffnessFromB,
  type QuadratureRule
} from '@isoledger/kernel';
import { SandboxPool } from '@isoledger/sandbox';
import { EXIT, formatDiagnostic, readDocument, type Command } from './io';

const USAGE = `usage: isoledger stiffness FILE --coords '[[x, y], …]' [--E 1] [--nu 0.3] [--thickness 1] [--area 1]

Prints { "K": [[…]] }, the stiffness of the element with the given nodal coordinates (one list
per node, in the document's node order). E, nu, thickness and area default to the document's.
Exit status: 0 done, 1 the element could not be computed, 2 invalid document or usage.`;

const AXES = ['x', 'y', 'z'] as const;

export interface StiffnessOverrides {
  E?: number;
  nu?: number;
  thickness?: number;
  area?: number;
}

/** The document's stiffness rule from the kernel's tables. */
export function quadratureOf(def: Definition): QuadratureRule {
  const q = def.quadrature;
  if (q.rule === 'gauss') return gaussRule(def.cell as 'interval' | 'quadrilateral' | 'hexahedron', q.points);
  if (q.rule === 'simplex') return simplexRule(def.cell as 'triangle' | 'tetrahedron', q.degree);
  return explicitRule(def.cell, q.points);
}

/** K (ndof × ndof, row-major) of one physical element: coords are nodes × dim. */
export async function stiffnessOf(
  def: Definition,
  coords: Float64Array,
  overrides: StiffnessOverrides,
  pool: SandboxPool
): Promise<{ K: Float64Array; ndof: number }> {
  const rule = quadratureOf(def);
  const tab = await pool.tabulate(def, rule.points);
  const material = { E: overrides.E ?? def.material.E, nu: overrides.nu ?? def.material.nu };
  const thickness = overrides.thickness ?? def.thickness;
  const area = overrides.area ?? def.area;
  if (typeof def.strain === 'string') {
    const K = elementStiffness(def.strain, tab, rule.weights, coords, material, { thickness, area });
    return { K, ndof: Math.round(Math.sqrt(K.length)) };
  }
  // custom block: B of every node at every point in one call (entry = point × nodes + node)
  const custom = def.strain;
  const { nodes, dim, points } = tab;
  const geom = mapPoints(tab, coords);
  const nd = custom.dofs.length;
  const nc = custom.components.length;
  const ndof = nodes * nd;
  const count = points * nodes;
  const constants = { E: material.E, nu: material.nu, thickness: thickness ?? 1, area: area ?? 1 };
  const perNode: Record<string, Float64Array | number> = {
    ...constants,
    N: new Float64Array(count),
    detJ: new Float64Array(count)
  };
  const perPoint: Record<string, Float64Array | number> = { ...constants, detJ: geom.detJ };
  for (let k = 0; k < dim; k++) {
    perNode[`dNd${AXES[k]}`] = new Float64Array(count);
    perNode[`dNd${def.coordinates[k]}`] = new Float64Array(count);
    perNode[AXES[k]] = new Float64Array(count);
    perNode[def.coordinates[k]] = new Float64Array(count);
    perPoint[AXES[k]] = new Float64Array(points);
    perPoint[def.coordinates[k]] = new Float64Array(points);
  }
  for (let q = 0; q < points; q++) {
    for (let k = 0; k < dim; k++) {
      (perPoint[AXES[k]] as Float64Array)[q] = geom.x[q * dim + k];
      (perPoint[def.coordinates[k]] as Float64Array)[q] = rule.points[q * dim + k];
    }
    for (let i = 0; i < nodes; i++) {
      const e = q * nodes + i;
      (perNode.N as Float64Array)[e] = tab.N[e];
      (perNode.detJ as Float64Array)[e] = geom.detJ[q];
      for (let k = 0; k < dim; k++) {
        (perNode[`dNd${AXES[k]}`] as Float64Array)[e] = geom.dNdx[e * dim + k];
        (perNode[`dNd${def.coordinates[k]}`] as Float64Array)[e] = tab.dN[e * dim + k];
        (perNode[AXES[k]] as Float64Array)[e] = geom.x[q * dim + k];
        (perNode[def.coordinates[k]] as Float64Array)[e] = rule.points[q * dim + k];
      }
    }
  }
  const blocks = await pool.evaluate(def, 'B', perNode, count, { nodes });
  const D = await pool.evaluate(def, 'D', constants, 1);
  const weight = await pool.evaluate(def, 'weight', perPoint, points);
  // the full B of a point: node blocks side by side, column = node × dofs + dof
  const Bq = new Float64Array(points * nc * ndof);
  for (let q = 0; q < points; q++)
    for (let i = 0; i < nodes; i++)
      for (let r = 0; r < nc; r++)
        for (let c = 0; c < nd; c++)
          Bq[(q * nc + r) * ndof + i * nd + c] = blocks[((q * nodes + i) * nc + r) * nd + c];
  const w = new Float64Array(points);
  for (let q = 0; q < points; q++) w[q] = weight[q] * rule.weights[q];
  return { K: stiffnessFromB(Bq, D, w, points, nc, ndof), ndof };
}

/** The --coords list as nodes × dim, checked against the document. */
export function parseCoords(text: string, def: Definition): Float64Array {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    throw new Error(`--coords is not a JSON list of node coordinates such as '[[0,0],[2,0],[0,1]]'`);
  }
  const nodes = def.nodes.length;
  const dim = def.coordinates.length;
  if (!Array.isArray(value) || value.length !== nodes)
    throw new Error(
      `--coords must list ${nodes} node${nodes === 1 ? '' : 's'} for '${def.name}', not ${Array.isArray(value) ? value.length : 'a single value'}`
    );
  const out = new Float64Array(nodes * dim);
  value.forEach((p, i) => {
    if (!Array.isArray(p) || p.length !== dim)
      throw new Error(
        `--coords: node ${i + 1} needs ${dim} coordinate${dim === 1 ? '' : 's'} (${AXES.slice(0, dim).join(', ')})`
      );
    p.forEach((v, k) => {
      if (typeof v !== 'number' || !Number.isFinite(v))
        throw new Error(`--coords: node ${i + 1}, coordinate ${k + 1} is not a finite number`);
      out[i * dim + k] = v;
    });
  });
  return out;
}

const numberOption = (name: string, text: string | undefined): number | undefined => {
  if (text === undefined) return undefined;
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v))
    throw new Error(`--${name} must be a finite number, not '${text}'`);
  return v;
};

/** One row per line, full precision. */
export function formatStiffness(K: Float64Array, ndof: number): string {
  const rows: string[] = [];
  for (let r = 0; r < ndof; r++)
    rows.push(
      `    [${Array.from(K.subarray(r * ndof, (r + 1) * ndof), (v) => JSON.stringify(v === 0 ? 0 : v)).join(', ')}]`
    );
  return `{\n  "K": [\n${rows.join(',\n')}\n  ]\n}\n`;
}

export const stiffnessCommand: Command = {
  summary: 'print the stiffness matrix of one physical element',
  usage: USAGE,
  async run(argv, io) {
    let file: string;
    let coordsText: string;
    let overrides: StiffnessOverrides;
    try {
      const { values, positionals } = parseArgs({
        args: argv,
        options: {
          coords: { type: 'string' },
          E: { type: 'string' },
          nu: { type: 'string' },
          thickness: { type: 'string' },
          area: { type: 'string' },
          help: { type: 'boolean', short: 'h', default: false }
        },
        allowPositionals: true,
        allowNegative: false,
        strict: true
      });
      if (values.help) {
        io.stdout.write(USAGE + '\n');
        return EXIT.ok;
      }
      if (positionals.length !== 1)
        throw new Error(
          positionals.length === 0 ? 'no FILE given' : `one FILE expected, got ${positionals.length}`
        );
      if (values.coords === undefined) throw new Error('--coords is required');
      file = positionals[0];
      coordsText = values.coords;
      overrides = {
        E: numberOption('E', values.E),
        nu: numberOption('nu', values.nu),
        thickness: numberOption('thickness', values.thickness),
        area: numberOption('area', values.area)
      };
    } catch (error) {
      io.stderr.write(`isoledger stiffness: ${(error as Error).message}\n\n${USAGE}\n`);
      return EXIT.invalid;
    }
    let source: string;
    try {
      source = await readDocument(file);
    } catch (error) {
      io.stderr.write(`isoledger stiffness: ${(error as Error).message}\n`);
      return EXIT.invalid;
    }
    const result = parseFormulation(source);
    if (!result.ok) {
      for (const d of result.diagnostics) io.stderr.write(formatDiagnostic(file, d) + '\n');
      return EXIT.invalid;
    }
    const def = result.definition;
    let coords: Float64Array;
    try {
      coords = parseCoords(coordsText, def);
      if (overrides.thickness !== undefined && !(overrides.thickness > 0))
        throw new Error('--thickness must be positive');
      if (overrides.area !== undefined && !(overrides.area > 0)) throw new Error('--area must be positive');
    } catch (error) {
      io.stderr.write(`isoledger stiffness: ${(error as Error).message}\n`);
      return EXIT.invalid;
    }
    const pool = new SandboxPool({ poolSize: 1 });
    try {
      const { K, ndof } = await stiffnessOf(def, coords, overrides, pool);
      io.stdout.write(formatStiffness(K, ndof));
      return EXIT.ok;
    } catch (error) {
      io.stderr.write(`isoledger stiffness: ${file}: ${(error as Error).message}\n`);
      return EXIT.failed;
    } finally {
      await pool.dispose();
    }
  }
};
