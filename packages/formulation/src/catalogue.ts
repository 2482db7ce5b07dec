import { readdirSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { join } from 'node:path';

/** The folder of the shipped example documents. */
export const CATALOGUE_DIR = fileURLToPath(new URL('../catalogue/', import.meta.url));

/** The shipped example documents, sorted by file name: `{ file: 'quad4-membrane.formulation.yaml', source }`. */
export function loadCatalogue(): { file: string; source: string }[] {
  return readdirSync(CATALOGUE_DIR)
    .filter((f) => f.endsWith('.formulation.yaml'))
    .sort()
    .map((file) => ({ file, source: readFileSync(join(CATALOGUE_DIR, file), 'utf8') }));
}
