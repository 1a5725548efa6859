/**
 * The CLI's Compute (src-main/services/compute.ts sizedCompute): in this process when the
 * work is one piece or too small to pay for a worker, otherwise a worker pool of as many
 * threads as the work has pieces and estimated seconds, at most --threads (default: the
 * cores). DEFLATOR_THREADS_EXACT=1 uses the threads asked for whatever the work (to check
 * or measure the pool itself). The pool module (and piscina) is loaded only
 * when a pool is started.
 */
import { DeflatorError } from '../../shared/errors.js';
import { defaultThreads, sizedCompute, type ClosableCompute } from '../services/compute.js';
import { Store } from '../store/store.js';
import { err } from './terminal.js';

export { defaultThreads };

export type CliCompute = ReturnType<typeof sizedCompute>;

/** Threads per core at most: more only wait for a core, each with its own memory. */
export const THREADS_PER_CORE = 2;

/**
 * The thread count a `--threads` flag asks for, bounded by the machine: absent, the
 * cores; a whole number of at least 1, else INPUT_INVALID; more than THREADS_PER_CORE
 * per core (extra threads only wait for a core, each with its own memory: 100000 would
 * exhaust it) is cut to that with a note on stderr. The numbers never depend on it.
 */
export function threadsFlag(value: string | undefined, flag = '--threads', cores = defaultThreads(), note: (text: string) => void = (t) => err(t)): number {
  if (value === undefined) return cores;
  const n = Number(value);
  const most = Math.max(1, cores) * THREADS_PER_CORE;
  if (!/^\s*\d+\s*$/.test(value) || !Number.isSafeInteger(n) || n < 1) throw new DeflatorError('INPUT_INVALID', `${flag} ${value}: expected a whole number of at least 1`, `e.g. ${flag} ${cores} (this machine has ${cores} cores)`);
  if (n > most) {
    note(`deflator: ${flag} ${n} is more than this machine's ${cores} cores can use (at most ${most}); using ${most}\n`);
    return most;
  }
  return n;
}

/** Runs fn with a Compute sized to each task, and releases its pool afterwards. */
export async function withCompute<T>(threads: number, fn: (compute: CliCompute) => Promise<T>): Promise<T> {
  const compute = sizedCompute({
    threads,
    exact: process.env.DEFLATOR_THREADS_EXACT === '1',
    pool: async (n): Promise<ClosableCompute> => (await import('../workers/pool.js')).createPool({ threads: n }),
  });
  try {
    return await fn(compute);
  } finally {
    await compute.close();
  }
}

/**
 * Opens the project database a command works on (it must exist), runs fn, closes it.
 * `access: 'read'` for commands that do not write it (see StoreOptions.access).
 */
export async function withStore<T>(db: string, fn: (store: Store) => Promise<T>, access: 'read' | 'write' = 'write'): Promise<T> {
  const store = new Store(db, { mustExist: true, access });
  try {
    return await fn(store);
  } finally {
    store.close();
  }
}
