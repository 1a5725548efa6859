/**
 * The CLI's Compute (src-main/services/compute.ts sizedCompute): in this process when the
 * work is one piece, otherwise a worker pool of as many threads as the work has pieces,
 * at most --threads (default: the cores). The pool module (and piscina) is loaded only
 * when a pool is started.
 */
import { defaultThreads, sizedCompute, type ClosableCompute } from '../services/compute.js';
import { Store } from '../store/store.js';

export { defaultThreads };

export type CliCompute = ReturnType<typeof sizedCompute>;

/** Runs fn with a Compute sized to each task, and releases its pool afterwards. */
export async function withCompute<T>(threads: number, fn: (compute: CliCompute) => Promise<T>): Promise<T> {
  const compute = sizedCompute({
    threads,
    pool: async (n): Promise<ClosableCompute> => (await import('../workers/pool.js')).createPool({ threads: n }),
  });
  try {
    return await fn(compute);
  } finally {
    await compute.close();
  }
}

/** Opens the project database a command reads (it must exist), runs fn, closes it. */
export async function withStore<T>(db: string, fn: (store: Store) => Promise<T>): Promise<T> {
  const store = new Store(db, { mustExist: true });
  try {
    return await fn(store);
  } finally {
    store.close();
  }
}
