// Formulation documents for the queue tests, each with its own material so that each gets its own
// definitionHash (the queue reuses a record of an already verified definitionHash at once).
import { parseFormulation } from '@isoledger/formulation';

/** A random stiffness base, so documents of one test run never meet records of another. */
export function stiffnessBase(): number {
  return 1_000 + Math.floor(Math.random() * 1_000_000) * 10;
}

/** The two-node bar with linear shape functions, the smallest complete element (common practice, no source). */
export function barSource(E: number, label = 'queue probe'): string {
  return `format: 1
name: bar2-queue-probe
title: Two-node bar, ${label}
cell: interval
nodes: [[-1], [1]]
shape:
  - (1 - xi) / 2
  - (1 + xi) / 2
strain: bar
quadrature: { rule: gauss, points: 1 }
material: { E: ${E}, nu: 0.3 }
area: 1
`;
}

/** The eight-node trilinear brick, fully integrated: a verification that lasts long enough to be interrupted. */
export function brickSource(E: number): string {
  const corners = [
    [-1, -1, -1],
    [1, -1, -1],
    [1, 1, -1],
    [-1, 1, -1],
    [-1, -1, 1],
    [1, -1, 1],
    [1, 1, 1],
    [-1, 1, 1]
  ];
  const sign = (v: number, c: string) => (v < 0 ? `(1 - ${c})` : `(1 + ${c})`);
  const shape = corners.map(
    ([a, b, c]) => `  - ${sign(a, 'xi')} * ${sign(b, 'eta')} * ${sign(c, 'zeta')} / 8`
  );
  return `format: 1
name: hex8-queue-probe
title: Eight-node brick, queue probe
cell: hexahedron
nodes: [${corners.map((p) => `[${p.join(', ')}]`).join(', ')}]
shape:
${shape.join('\n')}
strain: solid
quadrature: { rule: gauss, points: 2 }
material: { E: ${E}, nu: 0.25 }
`;
}

export interface ProbeDocument {
  source: string;
  definitionHash: string;
}

/** Parses a document as the registry would and returns it with its definitionHash. */
export function probe(source: string): ProbeDocument {
  const parsed = parseFormulation(source);
  if (!parsed.ok) {
    throw new Error(
      `test document is invalid:\n${parsed.diagnostics.map((d) => `${d.line}:${d.column} ${d.path} ${d.message}`).join('\n')}`
    );
  }
  return { source, definitionHash: parsed.definitionHash };
}
