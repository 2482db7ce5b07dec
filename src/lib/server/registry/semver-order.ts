// Registry versions are plain MAJOR.MINOR.PATCH (Semantic Versioning 2.0.0), ordered by `semver`.
import semver from 'semver';
import { malformed } from './errors';

const PLAIN = /^(0|[1-9]\d*)\.(0|[1-9]\d*)\.(0|[1-9]\d*)$/;

/** Refuses anything but MAJOR.MINOR.PATCH (no pre-release or build suffix, no leading 'v'). */
export function checkVersion(version: string): string {
  if (!PLAIN.test(version) || semver.valid(version) !== version) {
    throw malformed(`version '${version}' is not MAJOR.MINOR.PATCH (Semantic Versioning 2.0.0, e.g. 1.0.0)`, {
      field: 'version'
    });
  }
  return version;
}

/** Newest first. */
export function newestFirst<T extends { version: string }>(rows: T[]): T[] {
  return [...rows].sort((a, b) => semver.rcompare(a.version, b.version));
}

export function isGreater(candidate: string, than: string): boolean {
  return semver.gt(candidate, than);
}
