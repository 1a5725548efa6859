/**
 * The app's import panel: a file imported before with other options is refused in the panel's
 * words (no command-line flags), and the panel's "replace what is stored" brings it in read
 * the new way; the preview's hints speak of the panel's fields too. Files written here.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { isDeflatorError } from '../../../shared/errors.js';
import { StoreProject } from '../../../src-main/app/project.js';
import { panelWording } from '../../../src-main/app/wording.js';
import { Store } from '../../../src-main/store/store.js';

const ctx = { onProgress: () => {}, signal: new AbortController().signal };

describe('import messages in the panel\'s words', () => {
  it('rewrites the pipeline\'s option names into the panel\'s fields', () => {
    expect(panelWording('if -99.99 marks a missing value, pass --missing -99.99')).toBe('if -99.99 marks a missing value, choose missing-value codes -99.99');
    expect(panelWording('the date reads as YYYYMM: name that layout with --date-format YYYYMM')).toBe('the date reads as YYYYMM: name that layout with dates YYYYMM');
    expect(panelWording('the file looks like percent (150 % would be ...): pass --units percent')).toBe('the file looks like percent (150 % would be ...): choose "values are in percent" ticked');
    expect(panelWording('this looks like a comma as the decimal mark: pass --decimal comma (with --delimiter semicolon or tab)')).toBe('this looks like a comma as the decimal mark: choose decimal mark comma (with delimiter semicolon or tab)');
    expect(panelWording('to bring the file in read this way, import it again with --replace (the earlier import of these bytes is taken out in the same transaction), or take it out first: `deflator import remove 3 --db DB`')).toBe(
      'to bring the file in read this way, import it again with "replace what is stored" ticked (the earlier import of these bytes is taken out in the same transaction)',
    );
  });

  it('a return file imported as decimals, then as percent: refused in the panel\'s words, then replaced', async () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'deflator-wording-'));
    const file = path.join(dir, 'funds.csv');
    writeFileSync(file, 'date,fund-a,fund-b\n2020-01-31,1.5,-0.5\n2020-02-29,0.25,2.0\n2020-03-31,-0.75,0.75\n');
    const store = new Store(path.join(dir, 'p.db'));
    try {
      const project = new StoreProject(store);
      await project.importFile(file, 'returns', {}, ctx);
      let refusal: unknown;
      try {
        await project.importFile(file, 'returns', { percent: true }, ctx);
      } catch (e) {
        refusal = e;
      }
      expect(isDeflatorError(refusal) && refusal.code).toBe('CONFLICT');
      const text = isDeflatorError(refusal) ? `${refusal.message} ${refusal.hint ?? ''}` : '';
      expect(text).toContain('units: percent now, decimal then');
      expect(text).toContain('"replace what is stored" ticked');
      expect(text).not.toMatch(/--[a-z]/);
      const r = await project.importFile(file, 'returns', { percent: true, replace: true }, ctx);
      expect(r.rows).toBe(6);
      expect(r.warnings.map((w) => w.message).join(' ')).not.toMatch(/--[a-z]/);
      // stored as percent now: fund-a's first return, 1.5, reads 0.015 (as decimals it read 1.5)
      expect(project.history('fund-a').totalReturn[1] / project.history('fund-a').totalReturn[0]).toBeCloseTo(1.015, 12);
    } finally {
      store.close();
    }
  });
});
