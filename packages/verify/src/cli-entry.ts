// Runs `isoledger verify` on its own: node --no-node-snapshot --import tsx packages/verify/src/cli-entry.ts FILE [--json]
import { verifyCommand } from './command';

process.exitCode = await verifyCommand(process.argv.slice(2));
