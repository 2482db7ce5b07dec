// The record contract of verification.md ("The record (JSON)" and the verdict rule in its opening section).
import { describe, expect, it } from 'vitest';
import {
  type CheckResult,
  type VerificationRecord,
  ENGINE_VERSION,
  STAGES,
  jsonSafe,
  recordHash,
  verdictOf
} from '../../../packages/verify/src/record';

const check = (id: string, required: boolean, status: CheckResult['status']): CheckResult => ({
  id,
  required,
  status
});

function record(checks: CheckResult[], extra: Partial<VerificationRecord> = {}): VerificationRecord {
  return {
    engine: ENGINE_VERSION,
    formulation: 'tri3-membrane',
    version: '1.0.0',
    definitionHash: 'sha256:' + 'ab'.repeat(32),
    verdict: verdictOf(checks),
    startedAt: '2026-12-01T10:00:00.000Z',
    durationMs: 412,
    checks,
    ...extra
  };
}

describe('verdict rule (verification.md)', () => {
  it('is pass when every required check passes, whatever the informative ones say', () => {
    expect(
      verdictOf([
        check('kronecker-delta', true, 'pass'),
        check('bending-accuracy', false, 'error'),
        check('membrane-benchmark', false, 'skipped')
      ])
    ).toBe('pass');
  });
  it('is fail when a required check fails', () => {
    expect(
      verdictOf([check('kronecker-delta', true, 'pass'), check('zero-energy-modes', true, 'fail')])
    ).toBe('fail');
  });
  it('is fail when a required check ends in error, even beside a skipped one', () => {
    expect(verdictOf([check('patch-membrane', true, 'skipped'), check('convergence', true, 'error')])).toBe(
      'fail'
    );
  });
  it('is incomplete when none fails but a required check was skipped', () => {
    expect(
      verdictOf([check('kronecker-delta', true, 'pass'), check('patch-membrane', true, 'skipped')])
    ).toBe('incomplete');
  });
  it('is pass for an empty list (nothing required failed or was skipped)', () => {
    expect(verdictOf([])).toBe('pass');
  });
});

describe('record hash', () => {
  it('ignores the timing fields startedAt and durationMs', () => {
    const a = record([check('kronecker-delta', true, 'pass')]);
    const b = { ...a, startedAt: '2031-01-01T00:00:00.000Z', durationMs: 99999 };
    expect(recordHash(a)).toBe(recordHash(b));
  });
  it('does not depend on the order of keys (canonical JSON, RFC 8785)', () => {
    const a = record([{ id: 'x', required: true, status: 'pass', metric: 1, tolerance: 2 }]);
    const b: VerificationRecord = JSON.parse(JSON.stringify(a, Object.keys(a).reverse()));
    b.checks = [{ tolerance: 2, metric: 1, status: 'pass', required: true, id: 'x' }];
    expect(recordHash(b)).toBe(recordHash(a));
  });
  it('changes with any figure', () => {
    const a = record([{ id: 'x', required: true, status: 'pass', metric: 1e-16 }]);
    const b = record([{ id: 'x', required: true, status: 'pass', metric: 2e-16 }]);
    expect(recordHash(a)).not.toBe(recordHash(b));
    expect(recordHash(a)).toMatch(/^sha256:[0-9a-f]{64}$/);
  });
});

describe('JSON form of records', () => {
  it('turns typed arrays into arrays, non-finite numbers into null and drops undefined fields', () => {
    const out = jsonSafe({
      a: Float64Array.of(1, NaN),
      b: Infinity,
      c: undefined,
      d: [-0, 2],
      e: { f: -Infinity }
    });
    expect(out).toEqual({ a: [1, null], b: null, d: [0, 2], e: { f: null } });
    expect(JSON.stringify(out)).toBe('{"a":[1,null],"b":null,"d":[0,2],"e":{"f":null}}');
  });
  it('names the five stages in the order the engine runs them', () => {
    expect(STAGES).toEqual(['shape functions', 'element', 'patch tests', 'convergence', 'benchmarks']);
  });
});
