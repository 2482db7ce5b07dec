import { createServer } from 'node:net';

/** A free TCP port on 127.0.0.1 (asked of the kernel by binding port 0). */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.unref();
    srv.on('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const addr = srv.address();
      const port = typeof addr === 'object' && addr ? addr.port : 0;
      srv.close(() => resolve(port));
    });
  });
}

export async function waitFor(
  what: string,
  probe: () => Promise<boolean>,
  timeoutMs = 60_000,
  everyMs = 200
): Promise<void> {
  const until = Date.now() + timeoutMs;
  let lastError: unknown;
  while (Date.now() < until) {
    try {
      if (await probe()) return;
    } catch (e) {
      lastError = e;
    }
    await new Promise((r) => setTimeout(r, everyMs));
  }
  throw new Error(
    `${what} did not become ready within ${timeoutMs / 1000} s${lastError ? `: ${String(lastError)}` : ''}`
  );
}
