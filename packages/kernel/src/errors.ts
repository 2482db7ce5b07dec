/** The one error type of the kernel: `code` is stable and machine-readable, `detail` names where. */
export class KernelError extends Error {
  readonly code: string;
  readonly detail?: Record<string, unknown>;

  constructor(code: string, message: string, detail?: Record<string, unknown>) {
    super(message);
    this.name = 'KernelError';
    this.code = code;
    this.detail = detail;
  }
}

/** Throws a KernelError with code 'invalid-input' unless `ok`; a message function is only called on failure (hot paths). */
export function requireInput(
  ok: boolean,
  message: string | (() => string),
  detail?: Record<string, unknown>
): asserts ok {
  if (!ok)
    throw new KernelError('invalid-input', typeof message === 'function' ? message() : message, detail);
}

/** Checks that every entry of `a` is a finite number; names the array and the first bad index. */
export function requireFinite(a: ArrayLike<number>, name: string): void {
  for (let i = 0; i < a.length; i++) {
    if (!Number.isFinite(a[i])) {
      throw new KernelError('invalid-input', `${name}[${i}] is ${a[i]}, not a finite number`, {
        name,
        index: i
      });
    }
  }
}
