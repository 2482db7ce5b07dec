import { fileURLToPath } from 'node:url';
import { resolve } from 'node:path';

/** The project root (two folders above packages/devstack/src). */
export const ROOT = resolve(fileURLToPath(new URL('.', import.meta.url)), '../../..');
