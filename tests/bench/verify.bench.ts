// `npm run bench -- verify`: full verification of the four-node quadrilateral, the six-node triangle and the
// eight-node hexahedron of the catalogue, per stage and in total, each beside the kernel-only share of the
// same stage (its wall time without the time spent in sandbox calls). Figures only; nothing is asserted.
import { loadCatalogue, parseFormulation, type Definition } from '@isoledger/formulation';
import { SandboxPool } from '@isoledger/sandbox';
import { type StageTiming, verifyDefinition } from '../../packages/verify/src/index';
import type { BenchRow } from './report';

export const title = 'verification engine: full records';

const TARGETS: Record<string, string> = {
  'four-node quadrilateral': '≤ 1000 ms',
  'eight-node hexahedron': '≤ 5000 ms'
};

const WANTED: { label: string; match: (d: Definition) => boolean }[] = [
  {
    label: 'four-node quadrilateral',
    match: (d) =>
      d.cell === 'quadrilateral' &&
      d.nodes.length === 4 &&
      (d.strain === 'plane-stress' || d.strain === 'plane-strain') &&
      d.quadrature.rule === 'gauss' &&
      d.quadrature.points === 2
  },
  {
    label: 'six-node triangle',
    match: (d) => d.cell === 'triangle' && d.nodes.length === 6 && typeof d.strain === 'string'
  },
  {
    label: 'eight-node hexahedron',
    match: (d) =>
      d.cell === 'hexahedron' &&
      d.nodes.length === 8 &&
      d.strain === 'solid' &&
      d.quadrature.rule === 'gauss' &&
      d.quadrature.points === 2
  }
];

export default async function bench(report: (row: BenchRow) => void): Promise<void> {
  const docs = loadCatalogue().flatMap(({ source }) => {
    const p = parseFormulation(source);
    return p.ok ? [p] : [];
  });
  const sandbox = new SandboxPool({ poolSize: 1 });
  try {
    for (const w of WANTED) {
      const doc = docs.find((p) => w.match(p.definition));
      if (!doc) {
        console.log(`  (no catalogue document is the ${w.label}; skipped)`);
        continue;
      }
      // a first run (isolate start, program install, JIT warm-up), then the measured run
      const c0 = performance.now();
      await verifyDefinition(doc.definition, doc.definitionHash, { sandbox });
      const cold = performance.now() - c0;
      const stages: StageTiming[] = [];
      const t0 = performance.now();
      const record = await verifyDefinition(doc.definition, doc.definitionHash, {
        sandbox,
        onStage: (t) => stages.push(t)
      });
      const total = performance.now() - t0;
      for (const s of stages) {
        report({
          name: `${w.label}: ${s.stage} (${s.sandboxCalls} sandbox calls)`,
          value: s.ms,
          unit: 'ms',
          higherIsBetter: false,
          baseline: { name: 'kernel only', value: Math.max(s.ms - s.sandboxMs, 1e-3) }
        });
      }
      const sandboxMs = stages.reduce((a, s) => a + s.sandboxMs, 0);
      report({
        name: `${w.label}: whole record (${record.verdict})`,
        value: total,
        unit: 'ms',
        higherIsBetter: false,
        baseline: { name: 'kernel only', value: total - sandboxMs },
        target: TARGETS[w.label]
      });
      report({
        name: `${w.label}: whole record, first run in the process`,
        value: cold,
        unit: 'ms',
        higherIsBetter: false,
        baseline: { name: 'warm run', value: total }
      });
    }
  } finally {
    await sandbox.dispose();
  }
}
