// Builds the application when build/ is missing or older than its sources (by content hash, so a
// fresh clone with new file times does not rebuild needlessly and an edit always does).
import { createHash } from 'node:crypto';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { join, relative } from 'node:path';
import { ROOT } from './paths';

const INPUTS = [
  'src',
  'static',
  'sandbox/src',
  'packages',
  'svelte.config.js',
  'vite.config.ts',
  'tsconfig.json',
  'package-lock.json'
];
const SKIP = new Set(['node_modules', 'bin', 'catalogue-cache', '.svelte-kit']);
const STAMP = join(ROOT, 'build', '.source-hash');

function walk(path: string, out: string[]): void {
  if (!existsSync(path)) return;
  const st = statSync(path);
  if (st.isFile()) {
    out.push(path);
    return;
  }
  for (const entry of readdirSync(path).sort()) {
    if (SKIP.has(entry)) continue;
    walk(join(path, entry), out);
  }
}

export function sourceHash(): string {
  const files: string[] = [];
  for (const input of INPUTS) walk(join(ROOT, input), files);
  const h = createHash('sha256');
  for (const f of files) {
    h.update(relative(ROOT, f)).update('\0').update(readFileSync(f)).update('\0');
  }
  return h.digest('hex');
}

const LOCK = join(ROOT, '.svelte-kit-build.lock');

/** Two harnesses on one tree must not build at once: the second waits for the first (a lock folder). */
function withBuildLock(fn: () => void): void {
  const until = Date.now() + 10 * 60_000;
  for (;;) {
    try {
      mkdirSync(LOCK);
      break;
    } catch {
      // a lock older than 10 minutes is left over from a killed build
      if (existsSync(LOCK) && Date.now() - statSync(LOCK).mtimeMs > 10 * 60_000)
        rmSync(LOCK, { recursive: true, force: true });
      if (Date.now() > until) throw new Error(`could not take the build lock ${LOCK}`);
      Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, 500);
    }
  }
  try {
    fn();
  } finally {
    rmSync(LOCK, { recursive: true, force: true });
  }
}

export function buildIfStale(log: (s: string) => void = console.log): void {
  withBuildLock(() => buildUnlocked(log));
}

function buildUnlocked(log: (s: string) => void): void {
  const want = sourceHash();
  const have = existsSync(STAMP) ? readFileSync(STAMP, 'utf8').trim() : '';
  if (have === want && existsSync(join(ROOT, 'build', 'index.js'))) return;
  log('[isoledger] building the application (sources changed since the last build) …');
  const r = spawnSync(process.execPath, [join(ROOT, 'node_modules', 'vite', 'bin', 'vite.js'), 'build'], {
    cwd: ROOT,
    stdio: ['ignore', 'inherit', 'inherit'],
    env: { ...process.env, NODE_ENV: 'production' }
  });
  if (r.status !== 0) throw new Error('vite build failed (see above)');
  writeFileSync(STAMP, want + '\n');
}
