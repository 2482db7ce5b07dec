// Review and release: in-review → released (approve) or back to draft (reject), by a reviewer who
// wrote no part of the version; released → withdrawn with a reason. Mail goes out after commit.
import { newId } from '../ids';
import type { Transaction } from 'sequelize';
import { appendAudit } from './audit';
import { actorOf, type Viewer } from './access';
import { conflict, forbidden, malformed } from './errors';
import { exec, select, transact } from './sql';
import { findVersion, peopleByIds, subjectOf, versionAuthors, type VersionRow } from './store';
import { getVersion, type VersionDetail } from './versions';
import { notify, type Outgoing } from '../mail/notify';
import { reviewDecided, versionWithdrawn, newRelease } from '../mail/templates';

export const COMMENT_MAX = 8000;

export type Decision = 'approve' | 'reject';

function requireStatus(v: VersionRow, status: VersionRow['status'], doing: string): void {
  if (v.status !== status) {
    throw conflict(
      'wrong-status',
      `${subjectOf(v.name, v.version)} is ${v.status}: only a version that is ${status} can be ${doing}`,
      { status: v.status }
    );
  }
}

interface ProjectLead {
  project_key: string;
  project_title: string;
  version: string;
  lead_id: string;
}

/**
 * The leads of every project that pins a version of the formulation (optionally only this version):
 * the project's lead and whoever set one of its pins.
 */
async function leadsPinning(
  formulationId: string,
  versionId: string | null,
  t: Transaction
): Promise<Map<string, { project: string; title: string; version: string }[]>> {
  const rows = await select<ProjectLead>(
    `SELECT p.\`key\` AS project_key, p.title AS project_title, v.version, p.lead_id AS lead_id
       FROM project_pins pp JOIN projects p ON p.id = pp.project_id JOIN formulation_versions v ON v.id = pp.version_id
      WHERE pp.formulation_id = ? ${versionId ? 'AND pp.version_id = ?' : ''}
     UNION
     SELECT p.\`key\`, p.title, v.version, other.pinned_by
       FROM project_pins pp JOIN projects p ON p.id = pp.project_id JOIN formulation_versions v ON v.id = pp.version_id
       JOIN project_pins other ON other.project_id = pp.project_id
      WHERE pp.formulation_id = ? ${versionId ? 'AND pp.version_id = ?' : ''}`,
    versionId ? [formulationId, versionId, formulationId, versionId] : [formulationId, formulationId],
    t
  );
  const byLead = new Map<string, { project: string; title: string; version: string }[]>();
  for (const r of rows) {
    const list = byLead.get(r.lead_id) ?? [];
    if (!list.some((p) => p.project === r.project_key))
      list.push({ project: r.project_key, title: r.project_title, version: r.version });
    byLead.set(r.lead_id, list);
  }
  return byLead;
}

export async function reviewVersion(
  actor: Viewer,
  name: string,
  version: string,
  input: { decision: Decision; comment?: string }
): Promise<VersionDetail> {
  if (input.decision !== 'approve' && input.decision !== 'reject') {
    throw malformed(`decision must be 'approve' or 'reject', got '${String(input.decision)}'`, {
      field: 'decision'
    });
  }
  const comment = (input.comment ?? '').trim();
  if (input.decision === 'reject' && comment.length === 0)
    throw malformed('a rejection needs a comment that tells the author what to change', { field: 'comment' });
  if (comment.length > COMMENT_MAX)
    throw malformed(`comment must be at most ${COMMENT_MAX} characters`, { field: 'comment' });
  const messages: Outgoing[] = [];
  await transact(async (t) => {
    messages.length = 0;
    const v = await findVersion(name, version, t, true);
    requireStatus(v, 'in-review', 'reviewed');
    const authors = await versionAuthors(v.id, t);
    if (authors.includes(actor.id)) {
      throw forbidden(
        `approval needs a second person: you wrote or submitted ${subjectOf(name, version)}, so another reviewer must review it`
      );
    }
    const now = new Date();
    const approved = input.decision === 'approve';
    await exec(
      'INSERT INTO reviews (id, version_id, reviewer_id, decision, comment, record_id, created_at) VALUES (?, ?, ?, ?, ?, ?, ?)',
      [newId(), v.id, actor.id, input.decision, comment, v.record_id, now],
      t
    );
    if (approved) {
      await exec(
        `UPDATE formulation_versions SET status = 'released', released_at = ?, released_by = ?, updated_at = ? WHERE id = ?`,
        [now, actor.id, now, v.id],
        t
      );
    } else {
      await exec(
        `UPDATE formulation_versions SET status = 'draft', submitted_at = NULL, record_id = NULL, updated_at = ? WHERE id = ?`,
        [now, v.id],
        t
      );
    }
    await appendAudit(t, {
      actor: actorOf(actor),
      action: approved ? 'version.approve' : 'version.reject',
      subjectType: 'version',
      subject: subjectOf(name, version),
      before: { status: 'in-review' },
      after: {
        status: approved ? 'released' : 'draft',
        recordId: v.record_id,
        definitionHash: v.definition_hash,
        comment
      }
    });
    for (const author of await peopleByIds(authors, t)) {
      messages.push({
        to: author.email,
        ...reviewDecided({ recipient: author.name, name, version, reviewer: actor.name, approved, comment })
      });
    }
    if (approved) {
      for (const [leadId, projects] of await leadsPinning(v.formulation_id, null, t)) {
        const [lead] = await peopleByIds([leadId], t);
        if (lead)
          messages.push({ to: lead.email, ...newRelease({ recipient: lead.name, name, version, projects }) });
      }
    }
  });
  await notify(messages);
  return getVersion(actor, name, version);
}

export async function withdrawVersion(
  actor: Viewer,
  name: string,
  version: string,
  input: { reason: string }
): Promise<VersionDetail> {
  const reason = (input.reason ?? '').trim();
  if (reason.length === 0)
    throw malformed('a withdrawal needs a reason that tells the projects pinning it what is wrong', {
      field: 'reason'
    });
  if (reason.length > COMMENT_MAX)
    throw malformed(`reason must be at most ${COMMENT_MAX} characters`, { field: 'reason' });
  const messages: Outgoing[] = [];
  await transact(async (t) => {
    messages.length = 0;
    const v = await findVersion(name, version, t, true);
    requireStatus(v, 'released', 'withdrawn');
    const now = new Date();
    await exec(
      `UPDATE formulation_versions SET status = 'withdrawn', withdrawn_at = ?, withdrawn_by = ?, withdrawn_reason = ?, updated_at = ? WHERE id = ?`,
      [now, actor.id, reason, now, v.id],
      t
    );
    const pinning = await leadsPinning(v.formulation_id, v.id, t);
    await appendAudit(t, {
      actor: actorOf(actor),
      action: 'version.withdraw',
      subjectType: 'version',
      subject: subjectOf(name, version),
      before: { status: 'released' },
      after: {
        status: 'withdrawn',
        reason,
        pinnedBy: [...new Set([...pinning.values()].flat().map((p) => p.project))].sort()
      }
    });
    for (const [leadId, projects] of pinning) {
      const [lead] = await peopleByIds([leadId], t);
      if (lead)
        messages.push({
          to: lead.email,
          ...versionWithdrawn({ recipient: lead.name, name, version, reason, reviewer: actor.name, projects })
        });
    }
  });
  await notify(messages);
  return getVersion(actor, name, version);
}
