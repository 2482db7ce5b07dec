// `isoledger check FILE [--json]`: validate a formulation document.
import { parseArgs } from 'node:util';
import { parseFormulation } from '@isoledger/formulation';
import { EXIT, formatDiagnostic, readDocument, type Command } from './io';

const USAGE = `usage: isoledger check FILE [--json]

Validates a formulation document and prints every problem as FILE:LINE:COL message.
  --json   print { file, ok, diagnostics, name, sourceHash, definitionHash, definition } on stdout
Exit status: 0 valid, 2 invalid document or usage.`;

export const checkCommand: Command = {
  summary: 'validate a formulation document',
  usage: USAGE,
  async run(argv, io) {
    let file: string;
    let json: boolean;
    try {
      const { values, positionals } = parseArgs({
        args: argv,
        options: {
          json: { type: 'boolean', default: false },
          help: { type: 'boolean', short: 'h', default: false }
        },
        allowPositionals: true,
        strict: true
      });
      if (values.help) {
        io.stdout.write(USAGE + '\n');
        return EXIT.ok;
      }
      if (positionals.length !== 1)
        throw new Error(
          positionals.length === 0 ? 'no FILE given' : `one FILE expected, got ${positionals.length}`
        );
      file = positionals[0];
      json = values.json === true;
    } catch (error) {
      io.stderr.write(`isoledger check: ${(error as Error).message}\n\n${USAGE}\n`);
      return EXIT.invalid;
    }
    let source: string;
    try {
      source = await readDocument(file);
    } catch (error) {
      io.stderr.write(`isoledger check: ${(error as Error).message}\n`);
      return EXIT.invalid;
    }
    const result = parseFormulation(source);
    if (json) {
      const body = result.ok
        ? {
            file,
            ok: true,
            diagnostics: result.diagnostics,
            name: result.definition.name,
            sourceHash: result.sourceHash,
            definitionHash: result.definitionHash,
            definition: result.definition
          }
        : { file, ok: false, diagnostics: result.diagnostics };
      io.stdout.write(JSON.stringify(body, null, 2) + '\n');
      return result.ok ? EXIT.ok : EXIT.invalid;
    }
    for (const d of result.diagnostics) io.stdout.write(formatDiagnostic(file, d) + '\n');
    if (!result.ok) {
      const n = result.diagnostics.filter((d) => d.severity === 'error').length;
      io.stdout.write(`${file}: invalid, ${n} problem${n === 1 ? '' : 's'}\n`);
      return EXIT.invalid;
    }
    io.stdout.write(
      `${file}: valid formulation '${result.definition.name}', definitionHash ${result.definitionHash}\n`
    );
    return EXIT.ok;
  }
};
