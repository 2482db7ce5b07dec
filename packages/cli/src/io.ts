import { readFile } from 'node:fs/promises';

export interface CommandStream {
  write(chunk: string): unknown;
}
/** Where a command writes; the real process streams, or buffers in tests. */
export interface CommandIO {
  stdout: CommandStream;
  stderr: CommandStream;
}
/** One command of `isoledger`: its usage text and its run function returning the exit code. */
export interface Command {
  summary: string;
  usage: string;
  run(argv: string[], io: CommandIO): Promise<number>;
}

/** Exit status of the commands: 0 success, 1 the work failed, 2 invalid document or usage. */
export const EXIT = { ok: 0, failed: 1, invalid: 2 } as const;

/** Reads a document; a missing or unreadable file is an error naming the file. */
export async function readDocument(file: string): Promise<string> {
  try {
    return await readFile(file, 'utf8');
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    const why =
      code === 'ENOENT'
        ? 'no such file'
        : code === 'EISDIR'
          ? 'it is a folder'
          : code === 'EACCES'
            ? 'permission denied'
            : (error as Error).message;
    throw new Error(`cannot read ${file}: ${why}`);
  }
}

/** `FILE:LINE:COL message`, the form compilers use, so editors can jump to it. */
export function formatDiagnostic(
  file: string,
  d: { line: number; column: number; message: string; severity: string; path: string }
): string {
  return `${file}:${d.line}:${d.column} ${d.severity}: ${d.message}${d.path ? ` (${d.path})` : ''}`;
}
