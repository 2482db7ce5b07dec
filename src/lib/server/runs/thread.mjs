// The entry of each verification worker thread. Node.js 20 applies tsx's module hooks to the main
// thread only, so the thread loads the TypeScript worker (and the packages it imports) through
// tsx's own import API; this file itself is plain JavaScript for that reason.
import { tsImport } from 'tsx/esm/api';

const loaded = await tsImport('./worker.ts', import.meta.url);
// an ES module comes back as its namespace; a module tsx compiled to CommonJS one level deeper
const worker = typeof loaded.default === 'function' ? loaded : loaded.default;
if (typeof worker?.default !== 'function' || typeof worker?.warm !== 'function') {
  throw new Error('src/lib/server/runs/worker.ts must export a default function and warm()');
}

export default worker.default;
export const warm = worker.warm;
