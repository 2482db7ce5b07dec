import type { Command } from './io';

/** A command of the table: its one-line summary, and its module, loaded only when the command runs. */
export interface CommandEntry {
  summary: string;
  load(): Promise<Command>;
}

/**
 * The commands of `isoledger`, by name. Each module is imported on use, so `--help` starts
 * without mathjs.
 */
export const COMMANDS: Readonly<Record<string, CommandEntry>> = Object.freeze({
  check: {
    summary: 'validate a formulation document',
    load: async () => (await import('./check')).checkCommand
  },
  stiffness: {
    summary: 'print the stiffness matrix of one physical element',
    load: async () => (await import('./stiffness')).stiffnessCommand
  },
  verify: {
    summary: 'run every verification check and print the record',
    load: async () => (await import('./commands/verify')).verifyCommand
  },
  pull: {
    summary: 'fetch a released version and its record, checking its hashes',
    load: async () => (await import('./commands/pull')).pullCommand
  },
  manifest: {
    summary: "print a project's manifest, or --verify every pin's hashes and record",
    load: async () => (await import('./commands/manifest')).manifestCommand
  }
});
