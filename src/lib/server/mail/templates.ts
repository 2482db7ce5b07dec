// The registry's messages, each in plain text and HTML. Every message carries the safety notice.

export interface Rendered {
  subject: string;
  text: string;
  html: string;
}

export const SAFETY_NOTICE =
  'A passing verification record is evidence, not approval for use. Analyses need a qualified engineer’s judgement; local codes and licensed practice govern.';

const esc = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);

/** Paragraphs of plain text; the HTML version escapes every one of them. */
function render(subject: string, greeting: string, paragraphs: string[]): Rendered {
  const all = [`${greeting},`, ...paragraphs, '— Isoledger', SAFETY_NOTICE];
  return {
    subject,
    text: all.join('\n\n') + '\n',
    html: `<!doctype html><html><body style="font-family: sans-serif; color: #1f2328; background: #f6f3ec">${all
      .map((p) => `<p>${esc(p).replace(/\n/g, '<br>')}</p>`)
      .join('')}</body></html>`
  };
}

const ref = (name: string, version: string) => `${name} ${version}`;

export function reviewRequested(a: {
  recipient: string;
  name: string;
  version: string;
  submitter: string;
  recordId: string;
}): Rendered {
  return render(`Review requested: ${ref(a.name, a.version)}`, `Hello ${a.recipient}`, [
    `${a.submitter} submitted ${ref(a.name, a.version)} for review. Its passing verification record is ${a.recordId}.`,
    'Approval needs a reviewer who wrote no part of this version.'
  ]);
}

export function reviewDecided(a: {
  recipient: string;
  name: string;
  version: string;
  reviewer: string;
  approved: boolean;
  comment: string;
}): Rendered {
  const decided = a.approved ? 'approved and released' : 'returned to draft';
  return render(
    `${a.approved ? 'Released' : 'Changes requested'}: ${ref(a.name, a.version)}`,
    `Hello ${a.recipient}`,
    [`${a.reviewer} ${decided} ${ref(a.name, a.version)}.`, ...(a.comment ? [`Comment:\n${a.comment}`] : [])]
  );
}

function projectList(projects: { project: string; title: string; version: string }[]): string {
  return projects.map((p) => `• ${p.project} (${p.title}) pins ${p.version}`).join('\n');
}

export function versionWithdrawn(a: {
  recipient: string;
  name: string;
  version: string;
  reason: string;
  reviewer: string;
  projects: { project: string; title: string; version: string }[];
}): Rendered {
  return render(
    `Withdrawn: ${ref(a.name, a.version)} (pinned by ${a.projects.map((p) => p.project).join(', ')})`,
    `Hello ${a.recipient}`,
    [
      `${a.reviewer} withdrew ${ref(a.name, a.version)}. Your projects pin it:\n${projectList(a.projects)}`,
      `Reason:\n${a.reason}`,
      'Check the analyses that used it and pin another released version.'
    ]
  );
}

export function newRelease(a: {
  recipient: string;
  name: string;
  version: string;
  projects: { project: string; title: string; version: string }[];
}): Rendered {
  return render(`New release: ${ref(a.name, a.version)}`, `Hello ${a.recipient}`, [
    `${ref(a.name, a.version)} is released. Your projects pin an earlier version:\n${projectList(a.projects)}`,
    'Compare the versions before you move a pin.'
  ]);
}
