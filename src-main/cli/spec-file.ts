/** Reading a spec file for the commands that take one (fit, backtest, compare, ...). */
import { readFileSync } from 'node:fs';
import { DeflatorError } from '../../shared/errors.js';
import { specJson } from '../../shared/spec.js';

/**
 * The JSON of a spec file: NOT_FOUND when it cannot be read, SPEC_INVALID when it is not
 * JSON (a leading UTF-8 byte-order mark is fine).
 */
export function readSpecFile(file: string, hint = 'pass the path of a JSON spec (sample-data/specs/ has examples)'): unknown {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    const code = (e as { code?: string }).code;
    throw new DeflatorError('NOT_FOUND', `spec file ${file}: ${code === 'ENOENT' ? 'no such file' : (e as Error).message}`, hint);
  }
  return specJson(text, `spec file ${file}`);
}
