/** The presentation model, as the screens use it. */
import type { ResultWarning } from '../../../shared/results.js';
export type { Presentation, PresentedTable } from '../../../shared/present/index.js';
export { periodWord, present, warningNumbers } from '../../../shared/present/index.js';
export { plainText } from '../../../shared/present/format.js';

/** A warning's number in the screen's warning list (1-based; 0 when it is not there). */
export type ResultWarningRef = (w: ResultWarning) => number;
