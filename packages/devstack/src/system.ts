// Finding and, where allowed, installing Debian packages the local services need.
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';

export function findExecutable(
  names: string[],
  extraDirs: string[] = ['/usr/sbin', '/usr/bin', '/usr/local/bin', '/usr/local/sbin']
): string | null {
  for (const name of names) {
    const r = spawnSync('sh', ['-c', `command -v ${name}`], { encoding: 'utf8' });
    if (r.status === 0 && r.stdout.trim()) return r.stdout.trim();
    for (const d of extraDirs) if (existsSync(`${d}/${name}`)) return `${d}/${name}`;
  }
  return null;
}

const isRoot = (): boolean => typeof process.getuid === 'function' && process.getuid() === 0;

let aptUpdated = false;

/** Makes sure a Debian package is installed; as root installs it non-interactively, otherwise stops with the command to run. */
export function ensureDebianPackage(pkg: string, executables: string[], why: string): string {
  const found = findExecutable(executables);
  if (found) return found;
  if (!isRoot()) {
    throw new Error(
      `${why} needs ${executables[0]}, which is not installed. Run:\n  sudo apt-get update && sudo apt-get install -y ${pkg}`
    );
  }
  console.log(`[isoledger] installing Debian's ${pkg} (${why}) …`);
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  if (!aptUpdated) {
    execFileSync('apt-get', ['update'], { stdio: 'inherit', env });
    aptUpdated = true;
  }
  execFileSync('apt-get', ['install', '-y', '--no-install-recommends', pkg], { stdio: 'inherit', env });
  const after = findExecutable(executables);
  if (!after) throw new Error(`installed ${pkg}, but ${executables.join(' / ')} is still not found`);
  return after;
}
