// A unified diff (from the compare route, made with the `diff` package) as rows a page can lay out:
// each line with its number in the older and the newer source and whether it was kept, struck or entered.
import { parsePatch } from 'diff';

export type DiffKind = 'kept' | 'struck' | 'entered';

export interface DiffRow {
  kind: DiffKind;
  /** line number in the older source (kept and struck lines) */
  old: number | null;
  /** line number in the newer source (kept and entered lines) */
  new: number | null;
  text: string;
}

export interface DiffHunk {
  /** `lines 12–18 → 12–20`, for the hunk's heading */
  heading: string;
  rows: DiffRow[];
}

export interface SourceDiff {
  hunks: DiffHunk[];
  struck: number;
  entered: number;
}

function span(start: number, lines: number): string {
  if (lines === 0) return `after line ${start}`;
  return lines === 1 ? `line ${start}` : `lines ${start}–${start + lines - 1}`;
}

/** Parses one file's unified diff; an empty diff (identical sources) gives no hunks. */
export function diffRows(unified: string): SourceDiff {
  const [patch] = parsePatch(unified);
  const out: SourceDiff = { hunks: [], struck: 0, entered: 0 };
  if (!patch) return out;
  for (const h of patch.hunks) {
    let o = h.oldStart;
    let n = h.newStart;
    const rows: DiffRow[] = [];
    for (const line of h.lines) {
      const mark = line[0];
      const text = line.slice(1);
      if (mark === '-') {
        rows.push({ kind: 'struck', old: o++, new: null, text });
        out.struck++;
      } else if (mark === '+') {
        rows.push({ kind: 'entered', old: null, new: n++, text });
        out.entered++;
      } else if (mark === ' ') {
        rows.push({ kind: 'kept', old: o++, new: n++, text });
      }
      // '\' lines ("No newline at end of file") carry no content
    }
    out.hunks.push({ heading: `${span(h.oldStart, h.oldLines)} → ${span(h.newStart, h.newLines)}`, rows });
  }
  return out;
}
