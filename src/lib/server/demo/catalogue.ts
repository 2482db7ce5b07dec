// The demo catalogue, published through the same services people use (no back door): the demo
// author creates each example formulation and its first version, every version is verified by
// the real engine, the demo reviewer releases the sound ones, the flawed ones stay drafts with
// their failing records, a few get a second version with real differences, the fictional firm's
// two projects pin some, and one pinned version is withdrawn.
import { loadCatalogue, parseFormulation, type Definition } from '@isoledger/formulation';
import { SandboxPool } from '@isoledger/sandbox';
import { verifyDefinition } from '@isoledger/verify';
import { findUserByEmail } from '../auth/users';
import { claimNext, complete, fail, heartbeat } from '../runs/queue';
import type { Viewer } from '../registry/access';
import { createFormulation } from '../registry/formulations';
import { createDraft, getVersion, queueRun, submitVersion } from '../registry/versions';
import { reviewVersion, withdrawVersion } from '../registry/reviews';
import { createProject, pinVersion } from '../registry/projects';
import { selectOne } from '../registry/sql';
import { DEMO_PROJECTS } from './firm';

type Log = (s: string) => void;

const WORKER_ID = `demo-seed-${process.pid}`;

/** Executes every queued run in this process, through the queue's own claim and complete. */
export async function executeQueuedRuns(sandbox: SandboxPool, log: Log): Promise<number> {
  let done = 0;
  for (;;) {
    const run = await claimNext(WORKER_ID);
    if (!run) return done;
    const parsed = parseFormulation(run.source);
    if (!parsed.ok) {
      await fail(
        run.id,
        WORKER_ID,
        `the document is invalid: ${parsed.diagnostics.map((d) => `line ${d.line}, column ${d.column}: ${d.message}`).join('; ')}`
      );
      continue;
    }
    const started = Date.now();
    try {
      const record = await verifyDefinition(parsed.definition, run.definitionHash, {
        sandbox,
        version: run.version,
        onProgress: (p) => void heartbeat(run.id, WORKER_ID, p.progress, p.stage).catch(() => undefined)
      });
      await complete(run.id, WORKER_ID, record);
      log(`[isoledger]   verified ${parsed.definition.name}: ${record.verdict} (${Date.now() - started} ms)`);
      done++;
    } catch (e) {
      await fail(run.id, WORKER_ID, `verification stopped: ${(e as Error).message}`);
      log(`[isoledger]   verification of ${parsed.definition.name} stopped: ${(e as Error).message}`);
    }
  }
}

async function demoViewer(email: string): Promise<Viewer> {
  const u = await findUserByEmail(email);
  if (!u) throw new Error(`the demo account ${email} is missing: seed the demo accounts first`);
  return { id: u.id, email: u.email, name: u.name, roles: u.roles };
}

/** Puts a revision note at the top of the document's `summary: |` block. */
function reviseSummary(source: string, note: string): string | null {
  const m = /^summary: \|\n/m.exec(source);
  if (!m) return null;
  const at = m.index + m[0].length;
  return `${source.slice(0, at)}  Revised in 1.1.0: ${note}\n\n${source.slice(at)}`;
}

/**
 * A second version with real differences, edited as an author would (the rest of the text stays
 * as written): a corrected summary plus one more Gauss point per direction, or another default
 * Poisson's ratio for the check material.
 */
export function secondVersion(source: string, def: Definition): { source: string; change: string } | null {
  if (def.quadrature.rule === 'gauss' && def.quadrature.points < 10) {
    const points = def.quadrature.points + 1;
    const edited = source.replace(/^(quadrature:\s*\{[^}\n]*points:\s*)\d+/m, `$1${points}`);
    const change = `the stiffness is integrated with ${points} Gauss points per direction, one more than in 1.0.0, so strongly distorted shapes are integrated more accurately.`;
    const revised = edited !== source ? reviseSummary(edited, change) : null;
    return revised
      ? { source: revised, change: `quadrature raised to ${points} points per direction` }
      : null;
  }
  const nu = def.material.nu === 0.25 ? 0.3 : 0.25;
  const edited = source.replace(/^(material:\s*\{[^}\n]*nu:\s*)[-+0-9.eE]+/m, `$1${nu}`);
  const change = `the default check material now uses Poisson's ratio ${nu}, the value the firm's concrete and masonry checks use.`;
  const revised = edited !== source ? reviseSummary(edited, change) : null;
  return revised ? { source: revised, change: `default Poisson's ratio set to ${nu}` } : null;
}

/** The order in which cells get a second version: one of each kind first. */
const SECOND_VERSION_CELLS = ['quadrilateral', 'triangle', 'interval', 'tetrahedron', 'hexahedron'];

export interface CatalogueResult {
  released: string[];
  drafts: string[];
  seconds: string[];
  withdrawn: string | null;
}

/** Publishes the example catalogue once (skipped when the registry already holds formulations). */
export async function seedCatalogue(log: Log = () => undefined): Promise<CatalogueResult | null> {
  const existing = await selectOne<{ n: number | bigint }>('SELECT COUNT(*) AS n FROM formulations');
  if (Number(existing?.n ?? 0) > 0) return null;
  const author = await demoViewer('author@example.com');
  const reviewer = await demoViewer('reviewer@example.com');
  const lead = await demoViewer('lead@example.com');
  const sandbox = new SandboxPool({ poolSize: 1 });
  const result: CatalogueResult = { released: [], drafts: [], seconds: [], withdrawn: null };
  const sound: { name: string; source: string; def: Definition }[] = [];
  try {
    const docs = loadCatalogue();
    log(`[isoledger] publishing the example catalogue (${docs.length} documents, each verified) …`);
    for (const { file, source } of docs) {
      const parsed = parseFormulation(source);
      if (!parsed.ok) {
        log(
          `[isoledger]   ${file} is not a valid document, skipped: ${parsed.diagnostics[0]?.message ?? ''}`
        );
        continue;
      }
      const { name, title } = parsed.definition;
      await createFormulation(author, { name, title });
      await createDraft(author, name, { version: '1.0.0', source });
      await queueRun(author, name, '1.0.0');
      await executeQueuedRuns(sandbox, log);
      const v = await getVersion(author, name, '1.0.0');
      if (v.verification?.verdict === 'pass') {
        await submitVersion(author, name, '1.0.0');
        await reviewVersion(reviewer, name, '1.0.0', {
          decision: 'approve',
          comment:
            'Every required check passes and the summary states the element’s known limits. Released for project use under the usual engineering judgement.'
        });
        result.released.push(`${name}@1.0.0`);
        sound.push({ name, source, def: parsed.definition });
      } else {
        // A failing record cannot be submitted: the flawed element stays a draft with its record.
        result.drafts.push(`${name}@1.0.0`);
      }
    }

    const [footbridge, roof] = DEMO_PROJECTS;
    for (const p of DEMO_PROJECTS) await createProject(lead, p);
    // The footbridge project pins the first half of the sound elements, the roof project the rest
    // and the first two again, so some formulations are pinned by both.
    const half = Math.ceil(sound.length / 2);
    for (const s of sound.slice(0, half))
      await pinVersion(lead, footbridge.key, s.name, { version: '1.0.0' });
    for (const s of [...sound.slice(half), ...sound.slice(0, 2)])
      await pinVersion(lead, roof.key, s.name, { version: '1.0.0' });

    // Second versions: the first two are released (their leads hear of it), the third waits in review.
    const candidates = SECOND_VERSION_CELLS.flatMap((cell) => {
      for (const s of sound.filter((x) => x.def.cell === cell)) {
        const next = secondVersion(s.source, s.def);
        if (next) return [{ ...s, next }];
      }
      return [];
    });
    for (const [i, s] of candidates.slice(0, 3).entries()) {
      await createDraft(author, s.name, { version: '1.1.0', source: s.next!.source });
      await queueRun(author, s.name, '1.1.0');
      await executeQueuedRuns(sandbox, log);
      const v = await getVersion(author, s.name, '1.1.0');
      if (v.verification?.verdict !== 'pass') {
        result.drafts.push(`${s.name}@1.1.0`);
        continue;
      }
      await submitVersion(author, s.name, '1.1.0');
      if (i < 2) {
        await reviewVersion(reviewer, s.name, '1.1.0', {
          decision: 'approve',
          comment: `Checked the change (${s.next!.change}); the record still passes.`
        });
        result.released.push(`${s.name}@1.1.0`);
      }
      result.seconds.push(`${s.name}@1.1.0`);
    }

    // The roof project keeps a version that is then withdrawn: its lead is told by e-mail.
    const withdrawn = sound[half];
    if (withdrawn) {
      await withdrawVersion(reviewer, withdrawn.name, '1.0.0', {
        reason:
          'The summary overstated the element’s accuracy in bending on distorted meshes. Re-check results that relied on it and move to another released element.'
      });
      result.withdrawn = `${withdrawn.name}@1.0.0`;
    }
    log(
      `[isoledger] catalogue published: ${result.released.length} released, ${result.drafts.length} drafts, ${result.seconds.length} second versions, withdrawn ${result.withdrawn ?? 'none'}`
    );
    return result;
  } finally {
    await sandbox.dispose();
  }
}
