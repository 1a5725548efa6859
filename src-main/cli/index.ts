/**
 * `deflator` command line: one program, one sub-command per file in ./commands.
 * Errors go to stderr with a non-zero exit; --json output goes to stdout.
 */
import { Command, CommanderError } from 'commander';
import { describeError, isDeflatorError } from '../../shared/errors.js';
import { escapeControls } from '../../shared/text.js';
import { VERSION } from '../version.js';
import { guardTerminal } from './terminal.js';
import { COMMANDS } from './commands/registry.js';

export function buildProgram(): Command {
  const program = new Command('deflator')
    .description('Back-test asset-pricing models (GMM, HJ distance, GRS, two-pass) on your own return data, offline.')
    .version(VERSION)
    .showHelpAfterError('(run with --help for usage)');
  for (const register of COMMANDS) register(program);
  return program;
}

export async function main(argv: string[]): Promise<number> {
  const program = buildProgram();
  program.exitOverride();
  try {
    await program.parseAsync(argv, { from: 'user' });
    return process.exitCode === undefined ? 0 : Number(process.exitCode);
  } catch (e) {
    if (e instanceof CommanderError) return e.exitCode;
    // a message quotes file contents: show control characters, never send them to the terminal
    process.stderr.write(`deflator: ${escapeControls(describeError(e))}\n`);
    return isDeflatorError(e) ? 1 : 3;
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
const code = await main(process.argv.slice(2));
process.exitCode = code;
