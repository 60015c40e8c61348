/** The `spillway` command line: the same core as the editor, for CI and terminals. */
import { Command, CommanderError } from 'commander';
import { registerAudit } from './commands/audit';
import { registerRepack } from './commands/repack';
import { registerCompare } from './commands/compare';
import { registerSweep } from './commands/sweep';
import { registerConvert } from './commands/convert';
import { registerInspect } from './commands/inspect';
import { EXIT, UsageError } from './io';

export async function main(argv: string[]): Promise<number> {
  let code: number = EXIT.ok;
  const setExit = (c: number): void => {
    code = c;
  };
  const program = new Command('spillway')
    .description('Spillway: exact token ledgers for retrieval-augmented chat prompt logs')
    .exitOverride()
    .configureOutput({ writeErr: (s) => process.stderr.write(s) });
  registerAudit(program, setExit);
  registerRepack(program, setExit);
  registerCompare(program, setExit);
  registerSweep(program, setExit);
  registerConvert(program, setExit);
  registerInspect(program, setExit);
  try {
    await program.parseAsync(argv, { from: 'user' });
  } catch (e) {
    if (e instanceof CommanderError) {
      if (e.code === 'commander.helpDisplayed' || e.code === 'commander.version' || e.code === 'commander.help') return EXIT.ok;
      return EXIT.usage; // commander already printed a one-line reason
    }
    if (e instanceof UsageError) {
      process.stderr.write(`spillway: ${e.message}\n`);
      return EXIT.usage;
    }
    process.stderr.write(`spillway: ${(e as Error).message}\n`);
    return EXIT.usage;
  }
  return code;
}

if (require.main === module) {
  // A closed pipe (`spillway audit … | head`) is not an error worth a stack trace.
  process.stdout.on('error', (e: NodeJS.ErrnoException) => {
    if (e.code === 'EPIPE') process.exit(EXIT.ok);
  });
  main(process.argv.slice(2)).then(
    (c) => process.exit(c),
    (e) => {
      process.stderr.write(`spillway: ${(e as Error).message}\n`);
      process.exit(EXIT.usage);
    },
  );
}
