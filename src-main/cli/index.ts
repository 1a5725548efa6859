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
import { err, out } from './terminal.js';
import { COMMANDS, commandsFor } from './commands/registry.js';

/**
 * The program with the commands `argv` needs (commandsFor: the one named, else all; with no
 * argv, all), each command's modules loaded only then.
 */
export async function buildProgram(argv?: readonly string[]): Promise<Command> {
  const program = new Command('deflator')
    .description('Back-test asset-pricing models (GMM, HJ distance, GRS, two-pass) on your own return data, offline.')
    .version(VERSION)
    .showHelpAfterError('(run with --help for usage)')
    // help and usage errors through the same gate as everything else (they quote what was typed)
    .configureOutput({ writeOut: out, writeErr: err });
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
    const failure = storageError(e, dbArgument(argv)) ?? e;
    // a message quotes file contents: show control characters, never send them to the terminal
    err(`deflator: ${escapeControls(describeError(failure))}\n`);
    return exitCodeOf(failure);
  }
}

void main(process.argv.slice(2)).then((code) => {
  process.exitCode = code;
});
