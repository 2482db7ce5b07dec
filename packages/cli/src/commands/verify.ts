import { verifyCommand as runVerify } from '@isoledger/verify';
import type { Command } from '../io';

/** `isoledger verify FILE [--json]`: every check of the engine; exit 0 pass, 1 fail or incomplete, 2 invalid document. */
export const verifyCommand: Command = {
  summary: 'run every verification check and print the record',
  usage:
    'isoledger verify FILE [--json]\n  a table of checks by default; --json prints the record alone on stdout\n  exit 0 pass, 1 fail or incomplete, 2 invalid document',
  run: (argv, io) => runVerify(argv, io)
};
