// `npm run bench`: runs every tests/bench/*.bench.ts module, each in a fresh process of its own (so
// one module's heap and memory do not colour the next one's figures), and prints each figure beside
// its baseline from the same run, as a ratio. `npm run bench -- sandbox` runs the modules whose file
// name contains the word. Nothing here asserts on time.
import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { join } from 'node:path';
import type { BenchRow, BenchModule } from './report';
import { formatRows } from './report';

const here = fileURLToPath(new URL('.', import.meta.url));
const [first, ...rest] = process.argv.slice(2);

async function runOne(file: string): Promise<void> {
  const mod = (await import(pathToFileURL(join(here, file)).href)) as BenchModule;
  const rows: BenchRow[] = [];
  const started = performance.now();
  await mod.default((row) => {
    rows.push(row);
  });
  console.log(`\n## ${mod.title ?? file}  (${((performance.now() - started) / 1000).toFixed(1)} s)`);
  console.log(formatRows(rows));
  const mem = process.memoryUsage();
  console.log(
    `  peak resident set size of this module's process: ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MiB (heap now ${(mem.heapUsed / 2 ** 20).toFixed(0)} MiB)`
  );
}

if (first === '--one') {
  await runOne(rest[0]);
  process.exit(0);
} else {
  const only = [first, ...rest].filter((o) => o !== undefined);
  const files = readdirSync(here)
    .filter((f) => f.endsWith('.bench.ts'))
    .filter((f) => only.length === 0 || only.some((o) => f.includes(o)))
    .sort();
  let failed = 0;
  for (const file of files) {
    const r = spawnSync(
      process.execPath,
      // --expose-gc: a module may start each timed run on a collected heap
      [...process.execArgv, '--expose-gc', fileURLToPath(import.meta.url), '--one', file],
      {
        stdio: 'inherit'
      }
    );
    if (r.status !== 0) {
      failed++;
      console.log(`\n## ${file}: failed (exit ${r.status ?? r.signal})`);
    }
  }
  process.exit(failed ? 1 : 0);
}
