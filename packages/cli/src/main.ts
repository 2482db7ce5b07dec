// The `isoledger` command line (bin/isoledger.js runs this under tsx with --no-node-snapshot).
import { runCli } from './run';

process.exitCode = await runCli(process.argv.slice(2), { stdout: process.stdout, stderr: process.stderr });
