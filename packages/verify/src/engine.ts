/**
 * The verification run: every check of verification.md in the contract's order, one record at the
 * end whatever happens. A check that cannot run reports `error` with the reason; a stage that
 * cannot start (its tabulation failed, say) reports every one of its checks that way.
 */
import type { Tabulation } from '@isoledger/kernel';
import { type Definition, parseFormulation } from '@isoledger/formulation';
import type { Diagnostic } from '@isoledger/formulation';
import type { SandboxPool } from '@isoledger/sandbox';
import { benchmarkChecks } from './benchmarks';
import { convergenceCheck } from './convergence';
import { elementChecks } from './element';
import { type ElementModel, Evaluator, elementModel } from './model';
import { patchCheck, patchId } from './patch';
import {
  type CheckResult,
  ENGINE_VERSION,
  type Progress,
  RECORD_NOTICE,
  STAGES,
  type VerificationRecord,
  jsonSafe,
  verdictOf
} from './record';
import { facetRules, facetSet, tabulateSets } from './reference';
import { shapeChecks, shapePoints } from './shape';

/** Wall time of one stage and the part of it spent in sandbox calls (not part of the record). */
export interface StageTiming {
  stage: string;
  ms: number;
  sandboxMs: number;
  sandboxCalls: number;
}

export interface VerifyOptions {
  sandbox: SandboxPool;
  /** the registry version the record belongs to; null for a file */
  version?: string | null;
  onProgress?: (p: Progress) => void;
  onStage?: (t: StageTiming) => void;
}

/** A document that does not parse or validate: nothing was verified. */
export class InvalidDocumentError extends Error {
  readonly diagnostics: Diagnostic[];
  constructor(diagnostics: Diagnostic[]) {
    const first = diagnostics[0];
    super(
      `the document is invalid (${diagnostics.length} problem${diagnostics.length === 1 ? '' : 's'})` +
        (first ? `: line ${first.line}, column ${first.column}: ${first.message}` : '')
    );
    this.name = 'InvalidDocumentError';
    this.diagnostics = diagnostics;
  }
}

interface PlannedCheck {
  id: string;
  required: boolean;
  stage: number;
}

/** The checks a definition gets, in record order; the same list whatever the outcome. */
export function checkPlan(def: Definition): PlannedCheck[] {
  const plan: PlannedCheck[] = [];
  const add = (stage: number, required: boolean, ...ids: string[]) =>
    ids.forEach((id) => plan.push({ id, required, stage }));
  add(0, true, 'kronecker-delta', 'partition-of-unity', 'linear-completeness');
  add(0, false, 'completeness-degree');
  add(0, true, 'face-conformity');
  add(
    1,
    true,
    'jacobian-positive',
    'stiffness-symmetry',
    'rigid-body-modes',
    'zero-energy-modes',
    'positive-semidefinite',
    'frame-invariance'
  );
  add(2, true, patchId(def));
  add(3, true, 'convergence');
  add(4, false, 'bending-accuracy', 'membrane-benchmark');
  return plan;
}

/** Share of the progress bar per stage, by typical cost. */
const STAGE_WEIGHTS = [0.05, 0.1, 0.15, 0.5, 0.2];

/** Runs a caller's callback; its failure must not change the record, so it is not allowed to reach the checks. */
function quietly(fn: () => void): void {
  try {
    fn();
  } catch {
    // the record does not depend on who is watching it being made
  }
}

function reasonOf(err: unknown): string {
  if (err instanceof Error) return err.message;
  return String(err);
}

/** Runs every check on a parsed definition. Deterministic: same definition + engine → same record except startedAt/durationMs. */
export async function verifyDefinition(
  def: Definition,
  definitionHash: string,
  opts: VerifyOptions
): Promise<VerificationRecord> {
  const startedAt = new Date().toISOString();
  const t0 = performance.now();
  const plan = checkPlan(def);
  const results = new Map<string, CheckResult>();
  const evaluator = new Evaluator(opts.sandbox, def);

  let stageIndex = 0;
  let stageStart = 0;
  let sandboxAtStart = 0;
  let callsAtStart = 0;
  const report = (within: number) => {
    if (!opts.onProgress) return;
    let done = 0;
    for (let s = 0; s < stageIndex; s++) done += STAGE_WEIGHTS[s];
    const p = done + STAGE_WEIGHTS[stageIndex] * Math.min(1, Math.max(0, within));
    quietly(() => opts.onProgress!({ stage: STAGES[stageIndex], progress: Math.min(1, p) }));
  };
  const begin = (s: number) => {
    stageIndex = s;
    stageStart = performance.now();
    sandboxAtStart = evaluator.sandboxMs;
    callsAtStart = evaluator.calls;
    report(0);
  };
  const end = () => {
    const timing: StageTiming = {
      stage: STAGES[stageIndex],
      ms: performance.now() - stageStart,
      sandboxMs: evaluator.sandboxMs - sandboxAtStart,
      sandboxCalls: evaluator.calls - callsAtStart
    };
    if (opts.onStage) quietly(() => opts.onStage!(timing));
  };
  const put = (c: CheckResult) => {
    const planned = plan.find((p) => p.id === c.id);
    if (!planned) throw new Error(`internal: check '${c.id}' is not in the plan`);
    results.set(c.id, { ...c, required: planned.required });
  };
  const failStage = (s: number, reason: string) => {
    for (const p of plan) {
      if (p.stage === s && !results.has(p.id))
        put({ id: p.id, required: p.required, status: 'error', message: reason });
    }
  };
  /** Runs one stage; whatever it leaves unreported becomes `error` with the reason. */
  const stage = async (s: number, run: () => Promise<void>) => {
    begin(s);
    try {
      await run();
    } catch (err) {
      failStage(s, reasonOf(err));
    }
    failStage(s, 'the check did not run');
    report(1);
    end();
  };

  let model: ElementModel | null = null;
  let modelError = '';
  try {
    model = elementModel(def, evaluator);
  } catch (err) {
    modelError = `the element could not be set up: ${reasonOf(err)}`;
  }

  let tabs: Record<string, Tabulation> | null = null;
  let degree = -1;
  await stage(0, async () => {
    if (!model) throw new Error(modelError);
    const sp = shapePoints(model);
    const sets: Record<string, Float64Array> = { ...sp.sets };
    facetRules(model).forEach((r, f) => (sets[facetSet(f)] = r.points));
    tabs = await tabulateSets(model, sets);
    const out = shapeChecks(model, tabs, sp);
    degree = out.degree;
    out.checks.forEach(put);
  });
  const needTabs = () => {
    if (!model) throw new Error(modelError);
    if (!tabs)
      throw new Error(
        `not run: the shape functions could not be tabulated (${results.get('kronecker-delta')?.message ?? 'see kronecker-delta'})`
      );
    return { model, ruleTab: tabs.rule, tabs };
  };
  await stage(1, async () => {
    const { model: m, ruleTab } = needTabs();
    (await elementChecks(m, ruleTab)).checks.forEach(put);
  });
  await stage(2, async () => {
    const { model: m, tabs: t } = needTabs();
    put(await patchCheck(m, t, (f) => report(f)));
  });
  await stage(3, async () => {
    const { model: m, ruleTab } = needTabs();
    put(await convergenceCheck(m, ruleTab, degree, (f) => report(f)));
  });
  await stage(4, async () => {
    const { model: m, tabs: t } = needTabs();
    (await benchmarkChecks(m, t, (f) => report(f))).forEach(put);
  });

  const checks = plan.map((p) => results.get(p.id)!);
  const record: VerificationRecord = {
    engine: ENGINE_VERSION,
    formulation: def.name,
    version: opts.version ?? null,
    definitionHash,
    verdict: verdictOf(checks),
    startedAt,
    durationMs: Math.round(performance.now() - t0),
    checks,
    notice: RECORD_NOTICE
  };
  return jsonSafe(record) as VerificationRecord;
}

export type VerifySourceOptions = VerifyOptions;

/** Parses then verifies; an invalid document throws InvalidDocumentError carrying the diagnostics. */
export async function verifySource(source: string, opts: VerifySourceOptions): Promise<VerificationRecord> {
  const parsed = parseFormulation(source);
  if (!parsed.ok) throw new InvalidDocumentError(parsed.diagnostics);
  return verifyDefinition(parsed.definition, parsed.definitionHash, opts);
}
