/** `isoledger verify FILE [--json]`: the checks as a table, or the record alone as JSON. */
import { readFile } from 'node:fs/promises';
import { parseArgs } from 'node:util';
import { parseFormulation } from '@isoledger/formulation';
import { SandboxPool } from '@isoledger/sandbox';
import { verifyDefinition } from './engine';
import { type CheckResult, type Progress, RECORD_NOTICE, type VerificationRecord } from './record';

export interface CommandStream {
  write(chunk: string): unknown;
  isTTY?: boolean;
  columns?: number;
}
export interface CommandIO {
  stdout: CommandStream;
  stderr: CommandStream;
}

export const VERIFY_USAGE = `usage: isoledger verify FILE [--json]

Runs every check of the verification contract on a formulation document.
  --json   print the verification record alone on stdout
Exit status: 0 pass, 1 fail or incomplete, 2 invalid document or usage.`;

/** The `isoledger verify FILE [--json]` command; returns the exit code 0 pass, 1 fail/incomplete, 2 invalid document. */
export async function verifyCommand(
  argv: string[],
  io: CommandIO = { stdout: process.stdout, stderr: process.stderr }
): Promise<number> {
  let file: string;
  let json: boolean;
  try {
    const { values, positionals } = parseArgs({
      args: argv,
      options: {
        json: { type: 'boolean', default: false },
        help: { type: 'boolean', short: 'h', default: false }
      },
      allowPositionals: true,
      strict: true
    });
    if (values.help) {
      io.stdout.write(VERIFY_USAGE + '\n');
      return 0;
    }
    if (positionals.length !== 1) {
      throw new Error(
        positionals.length === 0
          ? 'no FILE given'
          : `one FILE expected, got ${positionals.length}: ${positionals.join(' ')}`
      );
    }
    file = positionals[0];
    json = values.json === true;
  } catch (err) {
    io.stderr.write(`isoledger verify: ${(err as Error).message}\n${VERIFY_USAGE}\n`);
    return 2;
  }

  let source: string;
  try {
    source = await readFile(file, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    const why =
      code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'is a directory' : (err as Error).message;
    io.stderr.write(`isoledger verify: cannot read ${file}: ${why}\n`);
    return 2;
  }
  const parsed = parseFormulation(source);
  if (!parsed.ok) {
    if (json)
      io.stdout.write(
        JSON.stringify({ file, valid: false, diagnostics: parsed.diagnostics }, null, 2) + '\n'
      );
    for (const d of parsed.diagnostics) io.stderr.write(`${file}:${d.line}:${d.column} ${d.message}\n`);
    return 2;
  }

  const bar = io.stderr.isTTY ? progressBar(io.stderr) : null;
  const sandbox = new SandboxPool({ poolSize: 1 });
  let record: VerificationRecord;
  try {
    record = await verifyDefinition(parsed.definition, parsed.definitionHash, {
      sandbox,
      version: null,
      onProgress: bar?.update
    });
  } finally {
    bar?.done();
    await sandbox.dispose();
  }
  io.stdout.write(json ? JSON.stringify(record, null, 2) + '\n' : formatRecord(record, file));
  return record.verdict === 'pass' ? 0 : 1;
}

/** Stage name and a bar of the run's progress, redrawn in place on a terminal. */
function progressBar(stream: CommandStream): { update: (p: Progress) => void; done: () => void } {
  const width = 28;
  let last = '';
  return {
    update(p: Progress) {
      const filled = Math.round(p.progress * width);
      const line = `  [${'█'.repeat(filled)}${'·'.repeat(width - filled)}] ${String(Math.round(p.progress * 100)).padStart(3)}%  ${p.stage}`;
      if (line === last) return;
      last = line;
      stream.write(`\r${line}\x1b[K`);
    },
    done() {
      if (last) stream.write('\r\x1b[K');
    }
  };
}

const num = (v: unknown): string => {
  if (typeof v !== 'number') return v === null ? '—' : '';
  if (Number.isInteger(v) && Math.abs(v) < 1e6) return String(v);
  return Math.abs(v) >= 1e4 || (Math.abs(v) < 1e-3 && v !== 0) ? v.toExponential(2) : v.toPrecision(4);
};

/** The figure of a check as one short text for the table. */
export function figureOf(c: CheckResult): string {
  switch (c.id) {
    case 'zero-energy-modes':
      return typeof c.zeroModes === 'number'
        ? `${c.zeroModes} zero, ${c.expected} rigid, ${c.spurious} spurious`
        : '';
    case 'completeness-degree':
      return typeof c.metric === 'number' ? `p = ${c.metric}` : '';
    case 'convergence': {
      const o = c.observed as { l2: number; energy: number } | undefined;
      const t = c.theoretical as { l2: number; energy: number } | undefined;
      return o && t ? `L2 ${num(o.l2)} (≥ ${t.l2 - 0.2}), energy ${num(o.energy)} (≥ ${t.energy - 0.2})` : '';
    }
    case 'bending-accuracy': {
      const rows = c.results as { shape: string; load: string; ratio: number }[] | undefined;
      return rows?.length ? rows.map((r) => `${r.shape[0]}/${r.load[0]} ${num(r.ratio)}`).join(' ') : '';
    }
    case 'membrane-benchmark': {
      const s = c.series as { divisions: number; value: number }[] | undefined;
      return s?.length
        ? `${s[s.length - 1].divisions}×${s[s.length - 1].divisions}: ${num(s[s.length - 1].value)}`
        : '';
    }
    default:
      if (Array.isArray(c.variants)) {
        return (c.variants as { variant: string; status: string }[])
          .map((v) => `${v.variant} ${v.status}`)
          .join(', ');
      }
      return typeof c.metric === 'number' ? num(c.metric) : '';
  }
}

/** The readable table of a record. */
export function formatRecord(record: VerificationRecord, file?: string): string {
  const lines: string[] = [];
  lines.push(
    `${record.formulation}${record.version ? ' ' + record.version : ''}${file ? `  (${file})` : ''}`
  );
  lines.push(`definition ${record.definitionHash}   engine ${record.engine}`);
  lines.push('');
  const idW = Math.max(5, ...record.checks.map((c) => c.id.length));
  lines.push(`  ${'check'.padEnd(idW)}  ${'required'.padEnd(8)}  ${'status'.padEnd(7)}  figure`);
  for (const c of record.checks) {
    lines.push(
      `  ${c.id.padEnd(idW)}  ${(c.required ? 'yes' : 'no').padEnd(8)}  ${c.status.padEnd(7)}  ${figureOf(c)}`
    );
    if (c.message && c.status !== 'pass') lines.push(`  ${' '.repeat(idW)}    ${c.message}`);
  }
  lines.push('');
  lines.push(`verdict: ${record.verdict}   (${record.durationMs} ms)`);
  lines.push(record.notice ?? RECORD_NOTICE);
  return lines.join('\n') + '\n';
}
