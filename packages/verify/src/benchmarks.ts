/**
 * §5 of verification.md: informative accuracy benchmarks, no pass/fail. Figures a methods engineer
 * compares against the literature: the straight cantilever of MacNeal & Harder (1985) and Cook's
 * tapered membrane. They run for the built-in elastic kinds; a custom block defines no loads here.
 */
import {
  CANTILEVER_STRIP,
  type ElementOptions,
  type MacroPatch,
  type Material,
  type Mesh,
  type StrainKind,
  TAPERED_MEMBRANE,
  type Tabulation,
  facetNodes,
  macroPatchMesh,
  refinePatch,
  solveWithDirichlet
} from '@isoledger/kernel';
import type { ElementModel } from './model';
import type { CheckResult } from './record';
import { facetRules, facetSet } from './reference';
import { type MeshSystem, boundaryFacets, facetLoads, meshSystem, nodeDofs } from './system';

/** Points within this fraction of a segment's length of it count as on it (meshes are built by exact maps). */
const ON_LINE_TOLERANCE = 1e-9;
/** Depth of the cantilever strip for solid elements (the published 6.0 × 0.2 × 0.1 beam) and of Cook's slab. */
const STRIP_DEPTH = 0.1;
const COOK_DEPTH = 1;
const COOK_DIVISIONS: Record<number, number[]> = { 2: [2, 4, 8, 16, 32], 3: [2, 4, 8, 16] };

/** The planar segment a → b, with an on-segment test for points (any z in 3D). */
function segment(a: number[], b: number[]) {
  const L = Math.hypot(b[0] - a[0], b[1] - a[1]);
  return {
    length: L,
    on(x: ArrayLike<number>): boolean {
      const cross = (x[0] - a[0]) * (b[1] - a[1]) - (x[1] - a[1]) * (b[0] - a[0]);
      const t = ((x[0] - a[0]) * (b[0] - a[0]) + (x[1] - a[1]) * (b[1] - a[1])) / (L * L);
      return (
        Math.abs(cross) / L <= ON_LINE_TOLERANCE * L && t >= -ON_LINE_TOLERANCE && t <= 1 + ON_LINE_TOLERANCE
      );
    }
  };
}

/** A planar quadrilateral patch extruded to one layer of hexahedra of the given depth. */
export function extrude(patch: MacroPatch, depth: number): MacroPatch {
  const nv = patch.vertexCount;
  const vertices = new Float64Array(2 * nv * 3);
  for (let i = 0; i < nv; i++) {
    vertices.set([patch.vertices[2 * i], patch.vertices[2 * i + 1], 0], 3 * i);
    vertices.set([patch.vertices[2 * i], patch.vertices[2 * i + 1], depth], 3 * (nv + i));
  }
  const cells = new Int32Array(patch.cellCount * 8);
  for (let c = 0; c < patch.cellCount; c++) {
    for (let v = 0; v < 4; v++) {
      cells[c * 8 + v] = patch.cells[c * 4 + v];
      cells[c * 8 + 4 + v] = patch.cells[c * 4 + v] + nv;
    }
  }
  return {
    ...patch,
    name: `${patch.name}-extruded`,
    cell: 'hexahedron',
    dim: 3,
    vertices,
    vertexCount: 2 * nv,
    cells,
    cellCount: patch.cellCount,
    source: `${patch.source}, extruded to depth ${depth}`
  };
}

/** Left and right end segments of a strip-like planar patch: the edges joining its lowest and highest vertices at each end. */
function ends(patch: MacroPatch): { left: [number[], number[]]; right: [number[], number[]] } {
  const pts = Array.from({ length: patch.vertexCount }, (_, i) => [
    patch.vertices[2 * i],
    patch.vertices[2 * i + 1]
  ]);
  const ys = pts.map((p) => p[1]);
  const lo = Math.min(...ys);
  const hi = Math.max(...ys);
  const pick = (y: number, f: (a: number, b: number) => number) =>
    pts.filter((p) => Math.abs(p[1] - y) < 1e-12).reduce((a, b) => (f(a[0], b[0]) === a[0] ? a : b));
  return { left: [pick(lo, Math.min), pick(hi, Math.min)], right: [pick(lo, Math.max), pick(hi, Math.max)] };
}

interface LoadCase {
  mesh: Mesh;
  sys: MeshSystem;
  u: Float64Array;
}

/** Solves the end-loaded problem: nodes on `clamp` fixed, a uniform traction `t` (force per area) on the facets on `tip`. */
async function endLoaded(
  model: ElementModel,
  tabs: Record<string, Tabulation>,
  patch: MacroPatch,
  kind: StrainKind,
  material: Material,
  options: ElementOptions,
  clamp: (x: ArrayLike<number>) => boolean,
  tip: (x: ArrayLike<number>) => boolean,
  traction: number[]
): Promise<LoadCase> {
  const mesh = macroPatchMesh(model.refNodes, model.cellName, patch);
  const sys = await meshSystem(model, tabs.rule, mesh, { kind, material, options });
  const rules = facetRules(model);
  const facets = boundaryFacets(mesh, facetNodes(model.refNodes, model.cellName), tip);
  const f = facetLoads(
    kind,
    sys,
    facets,
    rules.map((_, k) => tabs[facetSet(k)]),
    rules,
    (_x, _n, out) => out.set(traction),
    options
  );
  const clamped: number[] = [];
  for (let i = 0; i < mesh.nodeCount; i++)
    if (clamp(mesh.coords.subarray(i * mesh.dim, (i + 1) * mesh.dim))) clamped.push(i);
  const fixed = nodeDofs(clamped, model.dofsPerNode);
  const { u } = solveWithDirichlet(sys.K, f, fixed, new Float64Array(fixed.length));
  return { mesh, sys, u };
}

/** Mean of displacement component c over the nodes satisfying `where`. */
function meanDisplacement(
  lc: LoadCase,
  dpn: number,
  c: number,
  where: (x: ArrayLike<number>) => boolean
): number {
  let s = 0;
  let n = 0;
  const { mesh } = lc;
  for (let i = 0; i < mesh.nodeCount; i++) {
    if (where(mesh.coords.subarray(i * mesh.dim, (i + 1) * mesh.dim))) {
      s += lc.u[i * dpn + c];
      n++;
    }
  }
  return s / n;
}

function benchmarkKind(model: ElementModel): { kind: StrainKind; note: string } | null {
  if (model.kind === 'plane-strain') {
    return {
      kind: 'plane-stress',
      note: 'run in plane stress (same B; the published references are plane stress)'
    };
  }
  if (model.kind === 'plane-stress' || model.kind === 'solid' || model.kind === 'bar')
    return { kind: model.kind, note: '' };
  return null;
}

async function bendingAccuracy(
  model: ElementModel,
  tabs: Record<string, Tabulation>,
  progress: (f: number) => void
): Promise<CheckResult> {
  const id = 'bending-accuracy';
  const bk = benchmarkKind(model);
  if (!bk) {
    return {
      id,
      required: false,
      status: 'skipped',
      message: model.custom
        ? 'informative benchmark for the built-in elastic kinds; a custom strain block defines no loads for it'
        : 'no published straight-cantilever reference for axisymmetric elements is included'
    };
  }
  const ref = CANTILEVER_STRIP.rectangular;
  const material = ref.material!;
  const theoretical = {
    shear: ref.reference!.tipShearDeflection,
    extension: ref.reference!.tipExtensionDisplacement
  };
  const results: { shape: string; load: string; computed: number; theoretical: number; ratio: number }[] = [];
  const dpn = model.dofsPerNode;

  if (bk.kind === 'bar') {
    // the 6.0 long strip as six equal bars of area 0.2 × 0.1: only the extension load applies
    const bar: MacroPatch = {
      name: 'cantilever-bar',
      cell: 'interval',
      dim: 1,
      vertices: Float64Array.from([0, 1, 2, 3, 4, 5, 6]),
      vertexCount: 7,
      cells: Int32Array.from([0, 1, 1, 2, 2, 3, 3, 4, 4, 5, 5, 6]),
      cellCount: 6,
      source: `${ref.source} as six equal bars`
    };
    const area = 0.2 * STRIP_DEPTH;
    const lc = await endLoaded(
      model,
      tabs,
      bar,
      'bar',
      material,
      { area },
      (x) => Math.abs(x[0]) < 1e-12,
      (x) => Math.abs(x[0] - 6) < 1e-12,
      [1 / area]
    );
    const computed = meanDisplacement(lc, dpn, 0, (x) => Math.abs(x[0] - 6) < 1e-12);
    results.push({
      shape: 'six equal bars',
      load: 'extension',
      computed,
      theoretical: theoretical.extension,
      ratio: computed / theoretical.extension
    });
    return {
      id,
      required: false,
      status: 'pass',
      results,
      source: ref.source,
      message: `informative: unit tip extension of the 6.0 × 0.2 × 0.1 strip as six equal bars (tip shear does not apply to a bar); computed / theoretical ${ref.referenceNote ? `(${ref.referenceNote})` : ''}`
    };
  }

  const shapes = Object.entries(CANTILEVER_STRIP) as [string, MacroPatch][];
  let done = 0;
  for (const [shape, strip] of shapes) {
    const { left, right } = ends(strip);
    const l = segment(left[0], left[1]);
    const r = segment(right[0], right[1]);
    const solid = bk.kind === 'solid';
    const patch = solid ? extrude(strip, STRIP_DEPTH) : strip;
    const options: ElementOptions = solid ? {} : { thickness: strip.thickness ?? STRIP_DEPTH };
    const tipArea = r.length * (solid ? STRIP_DEPTH : (strip.thickness ?? STRIP_DEPTH));
    for (const load of ['shear', 'extension'] as const) {
      const t = new Array(dpn).fill(0);
      t[load === 'shear' ? 1 : 0] = 1 / tipArea;
      const lc = await endLoaded(model, tabs, patch, bk.kind, material, options, l.on, r.on, t);
      const computed = meanDisplacement(lc, dpn, load === 'shear' ? 1 : 0, r.on);
      const th = theoretical[load];
      results.push({ shape, load, computed, theoretical: th, ratio: computed / th });
      progress(0.5 * (++done / (2 * shapes.length)));
    }
  }
  const how =
    bk.kind === 'solid' ? 'the strips extruded to depth 0.1, one element through it' : 'plane, thickness 0.1';
  return {
    id,
    required: false,
    status: 'pass',
    results,
    source: ref.source,
    message:
      `informative: MacNeal & Harder (1985) straight cantilever, 6 × 1 elements per shape, ${how}; unit total load spread uniformly over the tip, ` +
      `tip displacement averaged over the tip nodes, computed / theoretical (0.1081 shear, 3.0e-5 extension)${bk.note ? '; ' + bk.note : ''}`
  };
}

async function membraneBenchmark(
  model: ElementModel,
  tabs: Record<string, Tabulation>,
  progress: (f: number) => void
): Promise<CheckResult> {
  const id = 'membrane-benchmark';
  const bk = benchmarkKind(model);
  if (!bk || bk.kind === 'bar') {
    return {
      id,
      required: false,
      status: 'skipped',
      message: model.custom
        ? 'informative benchmark for the built-in elastic kinds; a custom strain block defines no loads for it'
        : `Cook's tapered membrane is a plane problem; it does not fit ${model.kind === 'bar' ? 'a bar' : 'an axisymmetric'} element`
    };
  }
  const solid = bk.kind === 'solid';
  const material = TAPERED_MEMBRANE.material!;
  const reference = TAPERED_MEMBRANE.reference!.loadedEdgeMidpointVerticalDisplacement;
  const thickness = TAPERED_MEMBRANE.thickness ?? 1;
  const dpn = model.dofsPerNode;
  const series: { divisions: number; dofs: number; value: number; corner: number }[] = [];
  const divisions = COOK_DIVISIONS[solid ? 3 : 2];
  const depth = solid ? COOK_DEPTH : thickness;
  const clamp = (x: ArrayLike<number>) => Math.abs(x[0]) < 1e-9;
  const loaded = (x: ArrayLike<number>) => Math.abs(x[0] - 48) < 1e-9;
  const at = (y: number) => (x: ArrayLike<number>) => Math.abs(x[0] - 48) < 1e-9 && Math.abs(x[1] - y) < 1e-9;
  for (let k = 0; k < divisions.length; k++) {
    const n = divisions[k];
    const planar = refinePatch(TAPERED_MEMBRANE, n);
    const patch = solid ? extrude(planar, COOK_DEPTH) : planar;
    const t = new Array(dpn).fill(0);
    t[1] = 1 / (16 * depth);
    const lc = await endLoaded(
      model,
      tabs,
      patch,
      bk.kind,
      material,
      solid ? {} : { thickness },
      clamp,
      loaded,
      t
    );
    series.push({
      divisions: n,
      dofs: lc.sys.ndof,
      value: meanDisplacement(lc, dpn, 1, at(52)),
      corner: meanDisplacement(lc, dpn, 1, at(60))
    });
    progress(0.5 + (0.5 * (k + 1)) / divisions.length);
  }
  return {
    id,
    required: false,
    status: 'pass',
    series,
    reference,
    source: TAPERED_MEMBRANE.source,
    message:
      `informative: vertical displacement under unit total shear on the right edge, meshes ${divisions[0]}×${divisions[0]} to ` +
      `${divisions[divisions.length - 1]}×${divisions[divisions.length - 1]}; \`value\` is at the loaded edge's midpoint (48, 52), which converges to about ${reference} ` +
      `(value from memory of the published benchmark literature); \`corner\` is the top-right corner (48, 60), the point verification.md names` +
      (solid
        ? `; solid elements: a slab of depth ${COOK_DEPTH}, one element through it, free faces (close to, not the same as, plane stress)`
        : '') +
      (bk.note ? '; ' + bk.note : '')
  };
}

/** bending-accuracy and membrane-benchmark; each reports `error` with the reason if its problem cannot be solved. */
export async function benchmarkChecks(
  model: ElementModel,
  tabs: Record<string, Tabulation>,
  progress: (f: number) => void
): Promise<CheckResult[]> {
  const guard = async (id: string, run: () => Promise<CheckResult>): Promise<CheckResult> => {
    try {
      return await run();
    } catch (err) {
      return {
        id,
        required: false,
        status: 'error',
        message: `the benchmark could not be solved: ${(err as Error).message}`
      };
    }
  };
  return [
    await guard('bending-accuracy', () => bendingAccuracy(model, tabs, progress)),
    await guard('membrane-benchmark', () => membraneBenchmark(model, tabs, progress))
  ];
}
