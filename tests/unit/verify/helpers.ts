// Shared by the verification tests: the shipped example catalogue, parsed, and one sandbox pool.
import { isAbsolute, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { evaluate } from 'mathjs';
import { parseDocument } from 'yaml';
import { type Definition, loadCatalogue, parseFormulation } from '@isoledger/formulation';

export const ROOT = fileURLToPath(new URL('../../../', import.meta.url));
export const CATALOGUE_DIR = join(ROOT, 'packages/formulation/catalogue');

export interface CatalogueEntry {
  file: string;
  path: string;
  source: string;
  definition: Definition;
  definitionHash: string;
}

export function catalogue(): CatalogueEntry[] {
  return loadCatalogue().map(({ file, source }) => {
    const parsed = parseFormulation(source);
    if (!parsed.ok)
      throw new Error(
        `catalogue document ${file} does not parse: ${parsed.diagnostics.map((d) => d.message).join('; ')}`
      );
    return {
      file,
      path: isAbsolute(file) ? file : join(CATALOGUE_DIR, file.includes('/') ? file.split('/').pop()! : file),
      source,
      definition: parsed.definition,
      definitionHash: parsed.definitionHash
    };
  });
}

/** Points per direction (Gauss) or the degree (simplex) of a definition's rule; explicit rules give their point count. */
export function ruleSize(def: Definition): number {
  const q = def.quadrature;
  return q.rule === 'gauss' ? q.points : q.rule === 'simplex' ? q.degree : q.points.length;
}

/** The one catalogue entry matching; fails the test with what was looked for if there is not exactly one. */
export function pick(
  entries: CatalogueEntry[],
  what: string,
  match: (d: Definition) => boolean
): CatalogueEntry {
  const found = entries.filter((e) => match(e.definition));
  if (found.length !== 1)
    throw new Error(
      `expected one catalogue document that is ${what}, found ${found.length}: ${found.map((e) => e.file).join(', ')}`
    );
  return found[0];
}

export const isBuiltIn = (d: Definition) => typeof d.strain === 'string';
export const elastic2d = (d: Definition) => d.strain === 'plane-stress' || d.strain === 'plane-strain';

/** The same document with only its quadrature replaced (parsed again, so its hashes are its own). */
export function withQuadrature(
  source: string,
  quadrature: Record<string, unknown>
): { definition: Definition; definitionHash: string } {
  const doc = parseDocument(source);
  doc.set('quadrature', doc.createNode(quadrature, { flow: true }));
  const parsed = parseFormulation(doc.toString());
  if (!parsed.ok)
    throw new Error(parsed.diagnostics.map((d) => `${d.line}:${d.column} ${d.message}`).join('; '));
  return { definition: parsed.definition, definitionHash: parsed.definitionHash };
}

/** The same document with fields of its custom strain block removed. */
export function withoutStrainFields(
  source: string,
  fields: string[]
): { definition: Definition; definitionHash: string } {
  const doc = parseDocument(source);
  for (const f of fields) doc.deleteIn(['strain', f]);
  const parsed = parseFormulation(doc.toString());
  if (!parsed.ok)
    throw new Error(parsed.diagnostics.map((d) => `${d.line}:${d.column} ${d.message}`).join('; '));
  return { definition: parsed.definition, definitionHash: parsed.definitionHash };
}

/** Σ N_i = 1 at an interior point, evaluated by mathjs on the document's own shape expressions (a reference outside the engine). */
export function sumsToOne(def: Definition): boolean {
  const point = [0.21, 0.17, 0.13];
  const scope: Record<string, number> = { pi: Math.PI };
  def.coordinates.forEach((c, k) => (scope[c] = point[k]));
  const sum = def.shape.reduce((s, e) => s + (evaluate(e, { ...scope }) as number), 0);
  return Math.abs(sum - 1) < 1e-9;
}
