// Building blocks for the formulation tests: a valid base document and a writer that changes fields.
export interface DocFields {
  name?: string;
  title?: string;
  cell?: string;
  nodes?: string;
  definitions?: string[];
  shape?: string[];
  strain?: string;
  quadrature?: string;
  extra?: string;
}

/** A YAML double-quoted scalar; JSON's escapes are a subset of YAML's. */
export const quoted = (s: string) => JSON.stringify(s);

/** A document in the layout of the format's own example, with the given fields replaced. */
export function formulationDoc(f: DocFields = {}): string {
  const lines = [
    'format: 1',
    `name: ${f.name ?? 'tri3-test'}`,
    `title: ${f.title ?? 'Three-node triangle for tests'}`,
    `cell: ${f.cell ?? 'triangle'}`,
    `nodes: ${f.nodes ?? '[[0, 0], [1, 0], [0, 1]]'}`
  ];
  if (f.definitions) lines.push('definitions:', ...f.definitions.map((d) => `  - ${quoted(d)}`));
  lines.push('shape:', ...(f.shape ?? ['1 - xi - eta', 'xi', 'eta']).map((s) => `  - ${quoted(s)}`));
  lines.push(
    `strain: ${f.strain ?? 'plane-stress'}`,
    `quadrature: ${f.quadrature ?? '{ rule: simplex, degree: 1 }'}`
  );
  if (f.extra) lines.push(f.extra);
  return lines.join('\n') + '\n';
}

export const TRI3 = formulationDoc();
