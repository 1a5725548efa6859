/**
 * Every sub-command registers itself here (one line per command file), in the order
 * `deflator --help` should show them. Each is loaded by a dynamic import, so that a
 * command line evaluates only the modules of the command it names (a fit does not build
 * the import, batch, export or server modules, nor their schemas): src-main/cli/index.ts
 * loads one command when the first word names it, and all of them otherwise (help, an
 * unknown or misspelt command, --version).
 */
import type { Command } from 'commander';

export type RegisterCommand = (program: Command) => void;

export interface CommandEntry {
  /** The word that selects it on the command line. */
  name: string;
  load: () => Promise<RegisterCommand>;
}

export const COMMANDS: CommandEntry[] = [
  { name: 'demo', load: async () => (await import('./demo.js')).register },
  { name: 'import', load: async () => (await import('./import.js')).register },
  { name: 'info', load: async () => (await import('./info.js')).register },
  { name: 'returns', load: async () => (await import('./returns.js')).register },
  { name: 'portfolio', load: async () => (await import('./portfolio.js')).register },
  { name: 'fit', load: async () => (await import('./fit.js')).register },
  { name: 'backtest', load: async () => (await import('./backtest.js')).register },
  { name: 'compare', load: async () => (await import('./compare.js')).register },
  { name: 'batch', load: async () => (await import('./batch.js')).register },
  { name: 'present-value', load: async () => (await import('./present-value.js')).register },
  { name: 'drift', load: async () => (await import('./drift.js')).register },
  { name: 'runs', load: async () => (await import('./runs.js')).register },
  { name: 'show', load: async () => (await import('./show.js')).register },
  { name: 'replay', load: async () => (await import('./replay.js')).register },
  { name: 'export', load: async () => (await import('./export.js')).register },
  { name: 'serve', load: async () => (await import('./serve.js')).register },
];

/**
 * The commands a command line needs: the one its first word names, or all of them when
 * that word names none (root help, `help`, --version, a misspelt command, whose
 * suggestion needs every name).
 */
export function commandsFor(argv: readonly string[]): CommandEntry[] {
  const first = argv.find((a) => !a.startsWith('-'));
  const one = first === undefined ? undefined : COMMANDS.find((c) => c.name === first);
  return one ? [one] : COMMANDS;
}
