import { COMMANDS } from './commands';
import { EXIT, type CommandIO } from './io';

export function usage(): string {
  const width = Math.max(...Object.keys(COMMANDS).map((n) => n.length));
  const lines = Object.entries(COMMANDS).map(([name, c]) => `  ${name.padEnd(width)}  ${c.summary}`);
  return `usage: isoledger COMMAND [options]

Commands:
${lines.join('\n')}

Run 'isoledger COMMAND --help' for the options of a command.`;
}

/** Dispatches argv[0] to its command; an unknown or missing command prints the usage with exit status 2. */
export async function runCli(argv: string[], io: CommandIO): Promise<number> {
  const [name, ...rest] = argv;
  if (name === '--help' || name === '-h' || name === 'help') {
    io.stdout.write(usage() + '\n');
    return EXIT.ok;
  }
  const command =
    name !== undefined && Object.prototype.hasOwnProperty.call(COMMANDS, name) ? COMMANDS[name] : undefined;
  if (!command) {
    io.stderr.write(
      `${name === undefined ? 'isoledger: no command given' : `isoledger: unknown command '${name}'`}\n\n${usage()}\n`
    );
    return EXIT.invalid;
  }
  return (await command.load()).run(rest, io);
}
