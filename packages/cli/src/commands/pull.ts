// `isoledger pull NAME@VERSION`: fetches a released version's source and its verification record,
// checks that the source received is the one approved, and only then writes both files.
import { createHash } from 'node:crypto';
import { mkdir, rename, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { connectionFrom, IsoledgerApiError, IsoledgerClient, ConnectionError } from '@isoledger/client';
import { parseFormulation, sourceHash } from '@isoledger/formulation';
import { RECORD_NOTICE } from '@isoledger/verify';
import { EXIT, type Command } from '../io';

const USAGE = `usage: isoledger pull NAME@VERSION [--server URL] [--token T] [--out DIR] [--allow-unreleased] [--json]

Fetches a version's YAML source and its verification record and writes
  DIR/NAME@VERSION.formulation.yaml and DIR/NAME@VERSION.record.json
after checking that the source received hashes to the definitionHash and sourceHash the server
states, and that the record is of that definitionHash. Nothing is written when a check fails.
  --server URL         the Isoledger server (default: $ISOLEDGER_SERVER, else http://127.0.0.1:4310)
  --token T            an API token (default: $ISOLEDGER_TOKEN)
  --out DIR            where to write (default: the current folder)
  --allow-unreleased   also pull a draft, a version in review or a withdrawn version
  --json               print a summary as JSON on stdout
Exit status: 0 pulled, 1 refused (a mismatch, not released, or the server said no), 2 usage.`;

export interface PullSummary {
  name: string;
  version: string;
  status: string;
  sourceHash: string;
  definitionHash: string;
  recordId: string | null;
  verdict: string | null;
  files: { source: string; record: string | null };
}

/** What the server states about a version, checked against what it sent. */
export interface Served {
  source: string;
  sourceHash: string;
  definitionHash: string;
}

/** The sentences naming each way the source received differs from what the server states. */
export function sourceMismatches(served: Served, what: string, claimant = 'the server states'): string[] {
  const problems: string[] = [];
  const parsed = parseFormulation(served.source);
  if (!parsed.ok) {
    const d = parsed.diagnostics[0];
    problems.push(
      `the source of ${what} does not parse (line ${d?.line}, column ${d?.column}: ${d?.message})`
    );
    return problems;
  }
  if (parsed.definitionHash !== served.definitionHash)
    problems.push(
      `the source of ${what} hashes to definitionHash ${parsed.definitionHash}, but ${claimant} ${served.definitionHash}`
    );
  const sh = sourceHash(served.source);
  if (sh !== served.sourceHash)
    problems.push(`the source of ${what} hashes to sourceHash ${sh}, but ${claimant} ${served.sourceHash}`);
  return problems;
}

/** `"<hex>"`, the record's ETag: the SHA-256 of the bytes exactly as stored. */
export function bytesEtag(text: string): string {
  return `"${createHash('sha256').update(text, 'utf8').digest('hex')}"`;
}

/** Writes through a temporary name, so a reader never sees half a file. */
async function writeWhole(path: string, text: string): Promise<void> {
  const tmp = `${path}.${process.pid}.partial`;
  await writeFile(tmp, text, 'utf8');
  await rename(tmp, path);
}

export function refusal(e: unknown): string {
  if (e instanceof IsoledgerApiError) return `${e.message} (${e.status} ${e.code})`;
  if (e instanceof ConnectionError) return e.message;
  return (e as Error).message;
}

export const pullCommand: Command = {
  summary: 'fetch a released version and its record, checking its hashes',
  usage: USAGE,
  async run(argv, io) {
    let name: string;
    let version: string;
    let opts: { server?: string; token?: string; out: string; allowUnreleased: boolean; json: boolean };
    try {
      const { values, positionals } = parseArgs({
        args: argv,
        options: {
          server: { type: 'string' },
          token: { type: 'string' },
          out: { type: 'string', default: '.' },
          'allow-unreleased': { type: 'boolean', default: false },
          json: { type: 'boolean', default: false },
          help: { type: 'boolean', short: 'h', default: false }
        },
        allowPositionals: true,
        strict: true
      });
      if (values.help) {
        io.stdout.write(USAGE + '\n');
        return EXIT.ok;
      }
      if (positionals.length !== 1)
        throw new Error(
          positionals.length === 0
            ? 'no NAME@VERSION given'
            : `one NAME@VERSION expected, got ${positionals.length}`
        );
      const m = /^([a-z][a-z0-9-]{2,63})@(\d+\.\d+\.\d+)$/.exec(positionals[0]);
      if (!m) throw new Error(`'${positionals[0]}' is not NAME@VERSION (for example tri3-membrane@1.0.0)`);
      [, name, version] = m;
      opts = {
        server: values.server,
        token: values.token,
        out: values.out ?? '.',
        allowUnreleased: values['allow-unreleased'] === true,
        json: values.json === true
      };
    } catch (error) {
      io.stderr.write(`isoledger pull: ${(error as Error).message}\n\n${USAGE}\n`);
      return EXIT.invalid;
    }

    const what = `${name}@${version}`;
    const refuse = (problems: string[]) => {
      for (const p of problems) io.stderr.write(`isoledger pull: refused: ${p}\n`);
      io.stderr.write(`isoledger pull: nothing was written\n`);
      return EXIT.failed;
    };
    let client: IsoledgerClient;
    try {
      const conn = connectionFrom({ server: opts.server, token: opts.token });
      client = new IsoledgerClient({ ...conn, cache: false });
    } catch (e) {
      io.stderr.write(`isoledger pull: ${(e as Error).message}\n`);
      return EXIT.invalid;
    }

    let summary: PullSummary;
    let recordText: string | null = null;
    let source: string;
    try {
      const v = await client.versions.get(name, version);
      if (v.status !== 'released' && !opts.allowUnreleased) {
        const why =
          v.status === 'withdrawn' ? `withdrawn: ${v.withdrawn?.reason ?? 'no reason given'}` : v.status;
        return refuse([
          `${what} is ${why}; only released versions are pulled (--allow-unreleased pulls it anyway)`
        ]);
      }
      source = await client.versions.source(name, version);
      const problems = sourceMismatches(
        { source, sourceHash: v.sourceHash, definitionHash: v.definitionHash },
        what
      );
      if (source !== v.source)
        problems.push(`the source route and the version's JSON of ${what} carry different sources`);
      const recordId = v.verification?.recordId ?? null;
      let verdict: string | null = null;
      if (recordId) {
        const r = await client.records.getWithBytes(recordId);
        recordText = r.text;
        verdict = r.record.verdict;
        if (r.record.definitionHash !== v.definitionHash)
          problems.push(
            `record ${recordId} is of definitionHash ${r.record.definitionHash}, but ${what} has ${v.definitionHash}`
          );
        if (r.etag !== null && r.etag !== bytesEtag(r.text))
          problems.push(`record ${recordId} arrived with bytes that do not hash to its ETag ${r.etag}`);
        if (v.status === 'released' && r.record.verdict !== 'pass')
          problems.push(
            `record ${recordId} of the released ${what} has verdict '${r.record.verdict}', not pass`
          );
      } else if (!opts.allowUnreleased) {
        problems.push(`${what} cites no verification record`);
      }
      if (problems.length) return refuse(problems);
      const base = join(opts.out, what);
      summary = {
        name,
        version,
        status: v.status,
        sourceHash: v.sourceHash,
        definitionHash: v.definitionHash,
        recordId,
        verdict,
        files: {
          source: `${base}.formulation.yaml`,
          record: recordText === null ? null : `${base}.record.json`
        }
      };
    } catch (e) {
      return refuse([refusal(e)]);
    }

    try {
      await mkdir(opts.out, { recursive: true });
      await writeWhole(summary.files.source, source);
      if (summary.files.record && recordText !== null) await writeWhole(summary.files.record, recordText);
    } catch (e) {
      io.stderr.write(`isoledger pull: cannot write to ${opts.out}: ${(e as Error).message}\n`);
      return EXIT.failed;
    }
    if (opts.json) {
      io.stdout.write(JSON.stringify(summary, null, 2) + '\n');
      io.stderr.write(`${RECORD_NOTICE}\n`);
    } else {
      io.stdout.write(
        `pulled ${what} (${summary.status})\n` +
          `  definitionHash ${summary.definitionHash}\n` +
          `  source  ${summary.files.source}  ${summary.sourceHash}\n` +
          (summary.files.record
            ? `  record  ${summary.files.record}  ${summary.recordId} (${summary.verdict})\n`
            : '') +
          `${RECORD_NOTICE}\n`
      );
    }
    return EXIT.ok;
  }
};
