// What the registry screens ask of the API beyond api.md's first table, through HTTP against the
// built server on the real MariaDB: the catalogue's strain-kind, author, order and in-review filters
// with each row's strain kind, author, last change and verdict; the audit trail's action and time
// filters with the list of actions; and who withdrew a version.
import { beforeAll, describe, expect, it } from 'vitest';
import { DEMO, type Client } from '../support/http';
import {
  catalogueSource,
  createDraft,
  createFormulation,
  demoClients,
  released,
  submitted,
  tag,
  withdraw,
  type RunOutcome
} from '../support/registry-fixtures';

const t = tag();
const prefix = `lst-${t}`;
const bar = `${prefix}-bar`;
const custom = `${prefix}-custom`;
const tri = `${prefix}-tri`;

interface Row {
  name: string;
  latest: {
    version: string;
    status: string;
    cell: string;
    strain: string;
    author: { name: string; email: string };
    updatedAt: string;
    verification: { recordId: string; verdict: string } | null;
  } | null;
  inReview: { version: string; author: { email: string }; submittedAt: string | null }[];
}
interface Listing {
  items: Row[];
  total: number;
}
interface ApiError {
  error: { code: string; message: string; details: { field?: string } | null };
}

let people: Record<'author' | 'reviewer' | 'lead' | 'auditor', Client>;
let barRun: RunOutcome;

const list = (who: Client, query: string) =>
  who.getJson<Listing>(`/api/v1/formulations?q=${prefix}&${query}`);
const names = async (query: string) => (await list(people.author, query)).items.map((i) => i.name);

async function refusal(who: Client, path: string, status: number): Promise<ApiError['error']> {
  const r = await who.get(path);
  const body = (await r.json()) as ApiError;
  expect(r.status, JSON.stringify(body)).toBe(status);
  return body.error;
}

beforeAll(async () => {
  people = await demoClients('author', 'reviewer', 'lead', 'auditor');
  await createFormulation(people.author, bar, 'Listing probe, bar');
  barRun = await released(people, bar, '1.0.0', catalogueSource('bar2-linear', bar));
  await createFormulation(people.author, custom, 'Listing probe, custom strain');
  await createDraft(people.author, custom, '0.1.0', catalogueSource('quad4-custom-plane-strain', custom));
  await createFormulation(people.author, tri, 'Listing probe, triangle');
  await submitted(people.author, tri, '0.1.0', catalogueSource('tri3-membrane', tri));
});

describe('the catalogue listing', () => {
  it('gives each row its strain kind, author, last change and the verdict of the record it cites', async () => {
    const { items } = await list(people.author, '');
    const byName = new Map(items.map((i) => [i.name, i]));
    expect(byName.get(bar)!.latest).toMatchObject({
      version: '1.0.0',
      status: 'released',
      cell: 'interval',
      strain: 'bar',
      author: { email: DEMO.author },
      verification: { recordId: barRun.recordId, verdict: 'pass' }
    });
    expect(Number.isNaN(Date.parse(byName.get(bar)!.latest!.updatedAt))).toBe(false);
    // a strain block written out is listed as custom
    expect(byName.get(custom)!.latest).toMatchObject({
      strain: 'custom',
      status: 'draft',
      verification: null
    });
    expect(byName.get(tri)!.latest).toMatchObject({ strain: 'plane-stress', status: 'in-review' });
    expect(byName.get(tri)!.latest!.verification?.verdict).toBe('pass');
  });

  it('filters by strain kind, and names the allowed kinds when given another', async () => {
    expect(await names('strain=bar')).toEqual([bar]);
    expect(await names('strain=custom')).toEqual([custom]);
    expect(await names('strain=plane-stress')).toEqual([tri]);
    expect(await names('strain=solid')).toEqual([]);
    const e = await refusal(people.author, '/api/v1/formulations?strain=shell', 400);
    expect(e.message).toBe(
      "strain must be one of bar, plane-stress, plane-strain, axisymmetric, solid, custom, got 'shell'"
    );
    expect(e.details?.field).toBe('strain');
  });

  it('filters by part of the author’s or owner’s name or e-mail, in any case', async () => {
    expect(await names('author=KETTLEBY')).toEqual([bar, custom, tri]);
    expect(await names(`author=${encodeURIComponent(DEMO.author)}`)).toEqual([bar, custom, tri]);
    expect(await names('author=vantongeren')).toEqual([]);
  });

  it('orders by name, title or last change, either way, and refuses another order', async () => {
    expect(await names('sort=name')).toEqual([bar, custom, tri]);
    expect(await names('sort=-name')).toEqual([tri, custom, bar]);
    // titles: "Listing probe, bar" < "… custom strain" < "… triangle"
    expect(await names('sort=-title')).toEqual([tri, custom, bar]);
    // the triangle was submitted last, the bar released before the others were drafted
    expect(await names('sort=-updated')).toEqual([tri, custom, bar]);
    expect(await names('sort=updated')).toEqual([bar, custom, tri]);
    const e = await refusal(people.author, '/api/v1/formulations?sort=size', 400);
    expect(e.details?.field).toBe('sort');
  });

  it('lists the versions waiting for review, for those who may read them', async () => {
    const waiting = await list(people.reviewer, 'in_review=true');
    expect(waiting.items.map((i) => i.name)).toEqual([tri]);
    expect(waiting.items[0].inReview).toEqual([
      {
        version: '0.1.0',
        author: { name: 'Idris Kettleby', email: DEMO.author },
        submittedAt: expect.any(String)
      }
    ]);
    expect((await list(people.reviewer, 'in_review=false')).total).toBe(3);
    const e = await refusal(people.lead, '/api/v1/formulations?in_review=true', 403);
    expect(e.message).toContain('author, reviewer and auditor roles');
    expect((await refusal(people.author, '/api/v1/formulations?in_review=maybe', 400)).message).toContain(
      "in_review must be 'true' or 'false'"
    );
  });
});

describe('the audit trail', () => {
  const audit = (query: string) =>
    people.auditor.getJson<{
      items: { action: string; subject: string; at: string }[];
      total: number;
      actions: string[];
    }>(`/api/v1/audit?subject=${prefix}-bar&per_page=100&${query}`);

  it('filters by an action, or by the family of actions named by its first word', async () => {
    const exact = await audit('action=version.approve');
    expect(exact.items.map((e) => `${e.action} ${e.subject}`)).toEqual([`version.approve ${bar}@1.0.0`]);
    const family = await audit('action=version');
    expect(family.items.length).toBeGreaterThanOrEqual(4);
    expect(family.items.every((e) => e.action.startsWith('version.'))).toBe(true);
    const formulation = await audit('action=formulation');
    expect(formulation.items.map((e) => e.action)).toEqual(['formulation.create']);
    // the list of actions the trail holds, for a filter to offer
    expect(exact.actions).toEqual(
      expect.arrayContaining(['formulation.create', 'version.approve', 'version.submit'])
    );
    expect([...exact.actions].sort()).toEqual(exact.actions);
  });

  it('filters by time: bare dates are whole UTC days, instants are exact', async () => {
    const all = await audit('');
    const today = new Date().toISOString().slice(0, 10);
    const yesterday = new Date(Date.now() - 86_400_000).toISOString().slice(0, 10);
    expect((await audit(`from=${today}&until=${today}`)).total).toBe(all.total);
    expect((await audit(`until=${yesterday}`)).total).toBe(0);
    const newest = all.items[0].at;
    const sinceNewest = await audit(`from=${encodeURIComponent(newest)}`);
    expect(sinceNewest.items.map((e) => e.at)).toEqual(
      all.items.filter((e) => e.at >= newest).map((e) => e.at)
    );
    const beforeNewest = await audit(
      `until=${encodeURIComponent(new Date(Date.parse(newest) - 1).toISOString())}`
    );
    expect(beforeNewest.total).toBe(all.items.filter((e) => e.at < newest).length);
  });

  it('refuses a time it cannot read, and a range that runs backwards, naming the parameter', async () => {
    const bad = await refusal(people.auditor, '/api/v1/audit?from=yesterday', 400);
    expect(bad.message).toBe(
      "from must be a date (2026-12-01) or an instant (2026-12-01T09:30:00Z), got 'yesterday'"
    );
    expect(bad.details?.field).toBe('from');
    const backwards = await refusal(people.auditor, '/api/v1/audit?from=2026-12-02&until=2026-12-01', 400);
    expect(backwards.message).toContain('is later than until');
    expect(backwards.details?.field).toBe('until');
  });
});

describe('a withdrawn version', () => {
  it('says who withdrew it', async () => {
    await withdraw(people.reviewer, bar, '1.0.0', 'Listing probe: withdrawn to see who did it.');
    const v = await people.lead.getJson<{ withdrawn: { reason: string; by: { email: string } | null } }>(
      `/api/v1/formulations/${bar}/versions/1.0.0`
    );
    expect(v.withdrawn).toMatchObject({
      reason: 'Listing probe: withdrawn to see who did it.',
      by: { email: DEMO.reviewer, name: 'Saoirse Vantongeren' }
    });
  });
});
