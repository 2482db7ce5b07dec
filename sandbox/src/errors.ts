export type SandboxErrorCode = 'timeout' | 'memory' | 'non-finite' | 'invalid' | 'internal';

/** A fault of sandboxed evaluation, with the field (`shape[2]`, `strain.B`), the point and the node where it arose. */
export class SandboxError extends Error {
  /** where in the definition: `shape[2]`, `derivatives[2][0]`, `strain.B` */
  path?: string;
  /** index of the point (tabulate) or of the entry (evaluate) */
  point?: number;
  /** the node, where known */
  node?: number;
  constructor(
    readonly code: SandboxErrorCode,
    message: string,
    detail: { path?: string; point?: number; node?: number } = {}
  ) {
    super(message);
    this.name = 'SandboxError';
    if (detail.path !== undefined) this.path = detail.path;
    if (detail.point !== undefined) this.point = detail.point;
    if (detail.node !== undefined) this.node = detail.node;
  }
}
