#!/usr/bin/env node
// Starts the TypeScript entry under tsx with --no-node-snapshot (isolated-vm needs it on Node.js 20).
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { createRequire } from 'node:module';

const require = createRequire(import.meta.url);
const entry = fileURLToPath(new URL('../src/main.ts', import.meta.url));
const tsx = require.resolve('tsx');
const result = spawnSync(
  process.execPath,
  ['--no-node-snapshot', '--import', tsx, entry, ...process.argv.slice(2)],
  {
    stdio: 'inherit'
  }
);
process.exit(result.status ?? 1);
