// `isoledger manifest PROJECT [--verify]`: prints a project's manifest, or checks every pin: that it
// is still released, that its source hashes to the pinned definitionHash and sourceHash, and that
// its record is the pinned one, of that definitionHash, passing, and intact.
import { parseArgs } from 'node:util';
import { connectionFrom, IsoledgerClient, type Manifest, type ManifestPin } from '@isoledger/client';
import { RECORD_NOTICE } from '@isoledger/verify';
import { EXIT, type Command } from '../io';
import { bytesEtag, refusal, sourceMismatches } from './pull';

const USAGE = `usage: isoledger manifest PROJECT [--verify] [--server URL] [--token T] [--json]

Prints the manifest of project PROJECT (every pin with its definitionHash, sourceHash and record).
  --verify       check every pin: still released, its source hashes to the pinned definitionHash
                 and sourceHash, its record is the pinned one, of that definitionHash, passing,
                 and arrives with the bytes its ETag names
  --server URL   the Isoledger server (default: $ISOLEDGER_SERVER, else http://127.0.0.1:4310)
  --token T      an API token (default: $ISOLEDGER_TOKEN)
  --json         print the manifest, or with --verify the report, as JSON on stdout
Exit status: 0 printed or every pin checked out, 1 a mismatch or a withdrawn pin (each named)
or the server said no, 2 usage.`;

export interface PinReport {
  name: string;
  version: string;
  definitionHash: string;
  recordId: string | null;
  ok: boolean;
  problems: string[];
}

export interface ManifestReport {
  project: string;
  generatedAt: string;
  ok: boolean;
  pins: PinReport[];
}

/** Every check of one pin against what the server serves for it; the problems found, in words. */
export async function checkPin(client: IsoledgerClient, pin: ManifestPin): Promise<string[]> {
  const what = `${pin.name}@${pin.version}`;
  const problems: string[] = [];
  if (pin.status !== 'released')
    problems.push(
      `${what} is ${pin.status}${pin.status === 'withdrawn' ? ': the pin must move to a released version' : ''}`
    );
  try {
    const v = await client.versions.get(pin.name, pin.version);
    if (v.status === 'withdrawn' && pin.status !== 'withdrawn')
      problems.push(`${what} is withdrawn: ${v.withdrawn?.reason ?? 'no reason given'}`);
    if (v.definitionHash !== pin.definitionHash)
      problems.push(
        `${what} is served with definitionHash ${v.definitionHash}, but the manifest pins ${pin.definitionHash}`
      );
    if (v.sourceHash !== pin.sourceHash)
      problems.push(
        `${what} is served with sourceHash ${v.sourceHash}, but the manifest pins ${pin.sourceHash}`
      );
    if ((v.verification?.recordId ?? null) !== pin.recordId)
      problems.push(
        `${what} cites record ${v.verification?.recordId ?? 'none'}, but the manifest pins ${pin.recordId ?? 'none'}`
      );
    const source = await client.versions.source(pin.name, pin.version);
    problems.push(
      ...sourceMismatches(
        { source, sourceHash: pin.sourceHash, definitionHash: pin.definitionHash },
        what,
        'the manifest pins'
      )
    );
  } catch (e) {
    problems.push(`${what}: ${refusal(e)}`);
  }
  if (pin.recordId === null) {
    problems.push(`${what} is pinned without a verification record`);
    return problems;
  }
  try {
    const r = await client.records.getWithBytes(pin.recordId);
    if (r.record.definitionHash !== pin.definitionHash)
      problems.push(
        `record ${pin.recordId} of ${what} is of definitionHash ${r.record.definitionHash}, not the pinned ${pin.definitionHash}`
      );
    if (r.record.verdict !== 'pass')
      problems.push(`record ${pin.recordId} of ${what} has verdict '${r.record.verdict}', not pass`);
    if (r.etag !== null && r.etag !== bytesEtag(r.text))
      problems.push(
        `record ${pin.recordId} of ${what} arrived with bytes that do not hash to its ETag ${r.etag}`
      );
  } catch (e) {
    problems.push(`record ${pin.recordId} of ${what}: ${refusal(e)}`);
  }
  return problems;
}

export async function verifyManifest(client: IsoledgerClient, manifest: Manifest): Promise<ManifestReport> {
  const pins: PinReport[] = [];
  for (const pin of manifest.pins) {
    const problems = await checkPin(client, pin);
    pins.push({
      name: pin.name,
      version: pin.version,
      definitionHash: pin.definitionHash,
      recordId: pin.recordId,
      ok: problems.length === 0,
      problems
    });
  }
  return {
    project: manifest.project.key,
    generatedAt: manifest.generatedAt,
    ok: pins.every((p) => p.ok),
    pins
  };
}

export const manifestCommand: Command = {
  summary: "print a project's manifest, or --verify every pin's hashes and record",
  usage: USAGE,
  async run(argv, io) {
    let project: string;
    let opts: { server?: string; token?: string; verify: boolean; json: boolean };
    try {
      const { values, positionals } = parseArgs({
        args: argv,
        options: {
          verify: { type: 'boolean', default: false },
          server: { type: 'string' },
          token: { type: 'string' },
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
          positionals.length === 0 ? 'no PROJECT given' : `one PROJECT expected, got ${positionals.length}`
        );
      project = positionals[0];
      opts = {
        server: values.server,
        token: values.token,
        verify: values.verify === true,
        json: values.json === true
      };
    } catch (error) {
      io.stderr.write(`isoledger manifest: ${(error as Error).message}\n\n${USAGE}\n`);
      return EXIT.invalid;
    }
    let client: IsoledgerClient;
    try {
      client = new IsoledgerClient({
        ...connectionFrom({ server: opts.server, token: opts.token }),
        cache: false
      });
    } catch (e) {
      io.stderr.write(`isoledger manifest: ${(e as Error).message}\n`);
      return EXIT.invalid;
    }
    let manifest: Manifest;
    try {
      manifest = await client.projects.manifest(project);
    } catch (e) {
      io.stderr.write(`isoledger manifest: ${refusal(e)}\n`);
      return EXIT.failed;
    }
    if (!opts.verify) {
      io.stdout.write(JSON.stringify(manifest, null, 2) + '\n');
      return EXIT.ok;
    }

    const report = await verifyManifest(client, manifest);
    const bad = report.pins.filter((p) => !p.ok);
    if (opts.json) {
      io.stdout.write(JSON.stringify(report, null, 2) + '\n');
    } else {
      io.stdout.write(
        `manifest of ${report.project}, generated ${report.generatedAt}: ${report.pins.length} pin${report.pins.length === 1 ? '' : 's'}\n`
      );
      for (const p of report.pins) {
        io.stdout.write(
          `  ${p.ok ? 'ok      ' : 'MISMATCH'}  ${p.name}@${p.version}  ${p.definitionHash}  record ${p.recordId ?? 'none'}\n`
        );
        for (const problem of p.problems) io.stdout.write(`            ${problem}\n`);
      }
      io.stdout.write(
        report.ok
          ? `every pin of ${report.project} is released, hashes as pinned and cites its passing record\n`
          : `${bad.length} of ${report.pins.length} pins of ${report.project} do not check out\n`
      );
    }
    for (const p of bad)
      io.stderr.write(`isoledger manifest: ${p.name}@${p.version}: ${p.problems.join('; ')}\n`);
    io.stderr.write(`${RECORD_NOTICE}\n`);
    return report.ok ? EXIT.ok : EXIT.failed;
  }
};
