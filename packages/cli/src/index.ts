// @isoledger/cli: the `isoledger` command line, also callable in-process.
export { runCli, usage } from './run';
export { COMMANDS } from './commands';
export type { CommandEntry } from './commands';
export { checkCommand } from './check';
export { stiffnessCommand, stiffnessOf, quadratureOf, parseCoords, formatStiffness } from './stiffness';
export type { StiffnessOverrides } from './stiffness';
export { EXIT, formatDiagnostic } from './io';
export type { Command, CommandIO, CommandStream } from './io';
