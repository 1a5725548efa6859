/** The command line's exit codes, one table (documented in README, "Exit codes"). */
import { isDeflatorError, type ErrorCode } from '../../shared/errors.js';

/**
 * Exit codes (README, "Exit codes"): 0 done; 1 refused (input, spec, arguments, a name
 * clash, ...); 3 an unexpected failure (a defect); 4 replay mismatch (replay.ts); 5 the
 * database is busy (another writer kept it locked); 6 something may not be written (a
 * read-only database, folder or disk, a full disk, permission); 7 the database is damaged.
 */
export const EXIT_CODES: Partial<Record<ErrorCode, number>> = { BUSY: 5, NOT_WRITABLE: 6, DAMAGED: 7 };

export function exitCodeOf(e: unknown): number {
  return isDeflatorError(e) ? (EXIT_CODES[e.code] ?? 1) : 3;
}

