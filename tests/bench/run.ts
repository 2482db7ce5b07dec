// `npm run bench`: runs every tests/bench/*.bench.ts module in this one process and prints each
// figure beside its baseline from the same run, as a ratio. Nothing here asserts on time.
import { readdirSync } from 'node:fs';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { join } from 'node:path';
import type { BenchRow, BenchModule } from './report';
import { formatRows } from './report';

const here = fileURLToPath(new URL('.', import.meta.url));
const only = process.argv.slice(2);
const files = readdirSync(here)
  .filter((f) => f.endsWith('.bench.ts'))
  .filter((f) => only.length === 0 || only.some((o) => f.includes(o)))
  .sort();

for (const file of files) {
  const mod = (await import(pathToFileURL(join(here, file)).href)) as BenchModule;
  const rows: BenchRow[] = [];
  const started = performance.now();
  await mod.default((row) => {
    rows.push(row);
  });
  console.log(`\n## ${mod.title ?? file}  (${((performance.now() - started) / 1000).toFixed(1)} s)`);
  console.log(formatRows(rows));
}
const mem = process.memoryUsage();
console.log(
  `\npeak resident set size of the bench process: ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MiB (heap now ${(mem.heapUsed / 2 ** 20).toFixed(0)} MiB)`
);
