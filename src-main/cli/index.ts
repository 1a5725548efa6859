/**
 * `deflator` command line: one program, one sub-command per file in ./commands.
 * Errors go to stderr with a non-zero exit; --json output goes to stdout.
 */
import { Command, CommanderError } from 'commander';
import { describeError } from '../../shared/errors.js';
import { escapeControls } from '../../shared/text.js';
import { storageError } from '../store/errors.js';
import { exitCodeOf } from './exit-codes.js';
import { VERSION } from '../version.js';
import { guardTerminal } from './terminal.js';
import { COMMANDS, commandsFor } from './commands/registry.js';

/**
 * The program with the commands `argv` needs (commandsFor: the one named, else all; with no
 * argv, all), each command's modules loaded only then.
 */
export async function buildProgram(argv?: readonly string[]): Promise<Command> {
  const program = new Command('deflator')
    .description('Back-test asset-pricing models (GMM, HJ distance, GRS, two-pass) on your own return data, offline.')
    .version(VERSION)
    .showHelpAfterError('(run with --help for usage)');
  const registers = await Promise.all((argv ? commandsFor(argv) : COMMANDS).map((c) => c.load()));
  for (const register of registers) register(program);
  return program;
}

/** The --db argument of a command line, for naming the database in a storage error. */
function dbArgument(argv: readonly string[]): string {
  for (let i = 0; i < argv.length; i++) {
    if (argv[i] === '--db' && argv[i + 1] !== undefined) return argv[i + 1];
    if (argv[i].startsWith('--db=')) return argv[i].slice(5);
  }
  return 'the project database';
}

export async function main(argv: string[]): Promise<number> {
  try {
    const program = await buildProgram(argv);
    program.exitOverride();
    await program.parseAsync(argv, { from: 'user' });
    return process.exitCode === undefined ? 0 : Number(process.exitCode);
  } catch (e) {
    if (e instanceof CommanderError) return e.exitCode;
    // a raw SQLite or file-system failure of the database, said plainly
    const err = storageError(e, dbArgument(argv)) ?? e;
    // a message quotes file contents: show control characters, never send them to the terminal
    process.stderr.write(`deflator: ${escapeControls(describeError(err))}\n`);
    return exitCodeOf(err);
  }
}

// A reader that closes the pipe early (`deflator info | head`) is not an error.
for (const stream of [process.stdout, process.stderr]) {
  stream.on('error', (e: NodeJS.ErrnoException) => {
    if (e.code === 'EPIPE') process.exit(process.exitCode === undefined ? 0 : Number(process.exitCode));
    throw e;
  });
}

guardTerminal();
void main(process.argv.slice(2)).then((code) => {
  process.exitCode = code;
});
