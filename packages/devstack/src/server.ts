// Starts the built application (adapter-node) as a child process and waits until it answers.
import { spawn, type ChildProcess } from 'node:child_process';
import { createRequire } from 'node:module';
import { join } from 'node:path';
import { ROOT } from './paths';
import { waitFor } from './net';

const require = createRequire(import.meta.url);

export interface RunningServer {
  url: string;
  process: ChildProcess;
  stop(): Promise<void>;
}

/** node flags every Isoledger process uses: isolated-vm wants --no-node-snapshot; tsx runs the worker and package sources. */
export function nodeFlags(): string[] {
  return ['--no-node-snapshot', '--import', require.resolve('tsx')];
}

/**
 * The web server's flags besides those: a young generation of 64 MB semi-spaces, so that objects of
 * requests still in flight are not promoted after two scavenges and later collected by full
 * mark-compacts (under load this lifted cached reads by about a quarter and shortened their tail).
 */
export const SERVER_FLAGS = ['--max-semi-space-size=64'];

export async function startServer(opts: {
  port: number;
  env: Record<string, string>;
  quiet?: boolean;
  /** more node flags (a profiler's, say) */
  nodeArgs?: string[];
  /** CPUs the server may run on (taskset's list, such as '1'); all when absent */
  cpus?: string;
}): Promise<RunningServer> {
  const url = `http://127.0.0.1:${opts.port}`;
  const args = [...nodeFlags(), ...SERVER_FLAGS, ...(opts.nodeArgs ?? []), join(ROOT, 'server', 'index.js')];
  const [command, argv] = opts.cpus
    ? ['taskset', ['--cpu-list', opts.cpus, process.execPath, ...args]]
    : [process.execPath, args];
  const child = spawn(command, argv, {
    cwd: ROOT,
    env: {
      ...process.env,
      NODE_ENV: 'production',
      HOST: '127.0.0.1',
      PORT: String(opts.port),
      ORIGIN: opts.env.ORIGIN ?? url,
      // attachments may be up to 10 MB; adapter-node refuses larger bodies before our routes see them
      BODY_SIZE_LIMIT: process.env.BODY_SIZE_LIMIT ?? '11M',
      ...opts.env
    },
    stdio: ['ignore', opts.quiet ? 'ignore' : 'inherit', 'inherit']
  });
  let exited: number | null = null;
  child.on('exit', (code) => {
    exited = code ?? -1;
  });
  await waitFor(
    'the Isoledger server',
    async () => {
      if (exited !== null) throw new Error(`the server exited with code ${exited} during start-up`);
      const r = await fetch(`${url}/api/v1/health`);
      return r.ok;
    },
    90_000
  );
  return {
    url,
    process: child,
    stop: () =>
      new Promise<void>((res) => {
        if (exited !== null) return res();
        child.once('exit', () => res());
        child.kill('SIGTERM');
        setTimeout(() => child.kill('SIGKILL'), 10_000).unref();
      })
  };
}
