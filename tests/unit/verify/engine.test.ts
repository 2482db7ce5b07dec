// The run itself: reproducible records, progress, custom strain blocks, bad input, and independence from names.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseDocument } from 'yaml';
import { parseFormulation } from '@isoledger/formulation';
import { SandboxPool } from '@isoledger/sandbox';
import {
  InvalidDocumentError,
  type Progress,
  STAGES,
  type StageTiming,
  type VerificationRecord,
  recordHash,
  verifyDefinition,
  verifySource
} from '../../../packages/verify/src/index';
import { type CatalogueEntry, catalogue, pick, sumsToOne, withoutStrainFields } from './helpers';

let pool: SandboxPool;
let entries: CatalogueEntry[];
let tri3: CatalogueEntry;

beforeAll(() => {
  pool = new SandboxPool({ poolSize: 1 });
  entries = catalogue();
  tri3 = pick(
    entries,
    'the three-node triangle',
    (d) => d.cell === 'triangle' && d.nodes.length === 3 && typeof d.strain === 'string' && sumsToOne(d)
  );
});
afterAll(async () => {
  await pool?.dispose();
});

const withoutTiming = (r: VerificationRecord) =>
  JSON.stringify({ ...r, startedAt: undefined, durationMs: undefined });

describe('reproducible records', () => {
  it('gives byte-identical records for two runs of the same document, apart from startedAt and durationMs', async () => {
    const a = await verifySource(tri3.source, { sandbox: pool, version: '1.0.0' });
    const b = await verifySource(tri3.source, { sandbox: pool, version: '1.0.0' });
    expect(withoutTiming(a)).toBe(withoutTiming(b));
    expect(recordHash(a)).toBe(recordHash(b));
  });

  it('derives nothing from the element name: a renamed document gets the same checks and figures', async () => {
    const doc = parseDocument(tri3.source);
    doc.set('name', 'renamed-triangle-of-our-firm');
    doc.set('title', 'The same triangle under another name');
    const parsed = parseFormulation(doc.toString());
    if (!parsed.ok) throw new Error('renamed document must parse');
    const a = await verifyDefinition(tri3.definition, tri3.definitionHash, { sandbox: pool });
    const b = await verifyDefinition(parsed.definition, parsed.definitionHash, { sandbox: pool });
    expect(JSON.stringify(b.checks)).toBe(JSON.stringify(a.checks));
    expect(b.formulation).toBe('renamed-triangle-of-our-firm');
  });
});

describe('progress', () => {
  it('reports the stages in order with non-decreasing progress ending at 1, and times each stage', async () => {
    const seen: Progress[] = [];
    const timings: StageTiming[] = [];
    await verifyDefinition(tri3.definition, tri3.definitionHash, {
      sandbox: pool,
      onProgress: (p) => seen.push(p),
      onStage: (t) => timings.push(t)
    });
    expect(seen.length).toBeGreaterThan(STAGES.length);
    for (let i = 1; i < seen.length; i++) {
      expect(seen[i].progress).toBeGreaterThanOrEqual(seen[i - 1].progress);
      expect(STAGES.indexOf(seen[i].stage)).toBeGreaterThanOrEqual(STAGES.indexOf(seen[i - 1].stage));
    }
    expect(seen[0].progress).toBe(0);
    expect(seen[seen.length - 1].progress).toBeCloseTo(1, 12);
    expect([...new Set(seen.map((p) => p.stage))]).toEqual([...STAGES]);
    expect(timings.map((t) => t.stage)).toEqual([...STAGES]);
    for (const t of timings) expect(t.sandboxMs).toBeLessThanOrEqual(t.ms + 1);
  });
});

describe('custom strain blocks', () => {
  let custom: CatalogueEntry;
  beforeAll(() => {
    custom = pick(entries, 'the element with a custom strain block', (d) => typeof d.strain !== 'string');
  });

  it('verifies the catalogue element with a custom B and D through the sandbox and passes it', async () => {
    const r = await verifyDefinition(custom.definition, custom.definitionHash, { sandbox: pool });
    const bad = r.checks.filter((c) => c.required && c.status !== 'pass').map((c) => `${c.id}: ${c.message}`);
    expect(bad).toEqual([]);
    expect(r.verdict).toBe('pass');
    const patch = r.checks.find((c) => c.id.startsWith('patch-'))!;
    const variants = patch.variants as { variant: string; status: string }[];
    expect(variants.find((v) => v.variant === 'A')!.status).toBe('pass');
    expect(variants.find((v) => v.variant === 'B')!.status).toBe('pass');
  });

  it('is incomplete, with the reasons, when the block declares neither patch nor convergence fields (verification.md verdict rule)', async () => {
    const { definition, definitionHash } = withoutStrainFields(custom.source, ['patch', 'convergence']);
    const r = await verifyDefinition(definition, definitionHash, { sandbox: pool });
    const patch = r.checks.find((c) => c.id.startsWith('patch-'))!;
    const conv = r.checks.find((c) => c.id === 'convergence')!;
    expect(patch.status).toBe('skipped');
    expect(patch.message).toMatch(/patch/);
    expect(conv.status).toBe('skipped');
    expect(conv.message).toMatch(/convergence/);
    expect(r.verdict).toBe('incomplete');
  });
});

describe('placement of the test element', () => {
  it('puts axisymmetric elements away from the axis, at r ∈ [1, 2] (verification.md §2)', async () => {
    const axi = pick(entries, 'the axisymmetric element', (d) => d.strain === 'axisymmetric');
    const r = await verifyDefinition(axi.definition, axi.definitionHash, { sandbox: pool });
    const z = r.checks.find((c) => c.id === 'zero-energy-modes')!;
    const rs = (z.nodes as number[][]).map((p) => p[0]);
    expect(Math.min(...rs)).toBeGreaterThanOrEqual(1);
    expect(Math.max(...rs)).toBeLessThanOrEqual(2);
    expect(z.expected).toBe(1);
    expect(r.checks.find((c) => c.id === 'frame-invariance')!.message).toMatch(/axis/);
    expect(r.verdict).toBe('pass');
  });
});

describe('checks that cannot run', () => {
  it('reports every check as error with the reason when the shape functions cannot be tabulated (0/0 at a node), and still returns a whole record', async () => {
    const doc = parseDocument(tri3.source);
    doc.set('shape', ['1 - xi - eta', 'xi * xi / (xi + eta)', 'eta']);
    const parsed = parseFormulation(doc.toString());
    if (!parsed.ok) throw new Error(parsed.diagnostics.map((d) => d.message).join('; '));
    const r = await verifyDefinition(parsed.definition, parsed.definitionHash, { sandbox: pool });
    expect(r.checks.length).toBe(15);
    const required = r.checks.filter((c) => c.required);
    for (const c of required) {
      expect(c.status, c.id).toBe('error');
      expect(c.message, c.id).toMatch(/0\/0|division by zero|non-finite|NaN/);
    }
    expect(r.verdict).toBe('fail');
  });
});

describe('bad input', () => {
  it('refuses an invalid document with its diagnostics and verifies nothing', async () => {
    const bad = tri3.source.replace(/^cell:.*$/m, 'cell: pentagon');
    await expect(verifySource(bad, { sandbox: pool })).rejects.toBeInstanceOf(InvalidDocumentError);
    try {
      await verifySource(bad, { sandbox: pool });
    } catch (err) {
      const d = (err as InvalidDocumentError).diagnostics;
      expect(d.length).toBeGreaterThan(0);
      expect(d.some((x) => x.path.startsWith('cell'))).toBe(true);
      expect((err as Error).message).toMatch(/line \d+, column \d+/);
    }
  });
});
