/**
 * Every sub-command registers itself here (one line per command file).
 * Keep this list in the order `deflator --help` should show them.
 */
import type { Command } from 'commander';
import { register as demo } from './demo.js';
import { register as importData } from './import.js';
import { register as info } from './info.js';
import { register as returns } from './returns.js';
import { register as fit } from './fit.js';
import { register as backtest } from './backtest.js';
import { register as compare } from './compare.js';
import { register as presentValue } from './present-value.js';
import { register as drift } from './drift.js';
import { register as batch } from './batch.js';
import { register as portfolio } from './portfolio.js';
import { register as runs } from './runs.js';
import { register as show } from './show.js';
import { register as replay } from './replay.js';
import { register as exportRun } from './export.js';
import { register as serve } from './serve.js';

export type RegisterCommand = (program: Command) => void;

export const COMMANDS: RegisterCommand[] = [demo, importData, info, returns, portfolio, fit, backtest, compare, batch, presentValue, drift, runs, show, replay, exportRun, serve];
