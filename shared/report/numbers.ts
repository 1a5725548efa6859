/** Number text for exports: the presentation model's one set of display roundings (shared/present/format.ts). */
export { displayNumber, exactNumber, fixed, significant } from '../present/format.js';
export type { NumberFormat } from '../present/types.js';
