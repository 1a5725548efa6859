/**
 * The import log the app lists: the stored imports, newest first, with their warnings, and
 * file names without folders (an uploaded copy shows the name it was chosen under, never the
 * app's internal incoming/ path).
 */
import { describe, expect, it } from 'vitest';
import { displayFileName, StoreProject } from '../../../src-main/app/project.js';
import { makeProject } from '../runs/helpers.js';

describe('stored imports for the app', () => {
  it('uploaded copies show their own name; every stored import is listed with its warnings', async () => {
    expect(displayFileName('/home/u/.config/deflator/incoming/20260102T030405-123456-prices.csv')).toBe('prices.csv');
    expect(displayFileName('C:\\data\\factors.csv')).toBe('factors.csv');
    const p = await makeProject();
    try {
      const list = new StoreProject(p.store).imports();
      expect(list.map((e) => e.file)).toEqual(['consumption.csv', 'bill_yield.csv', 'factors.csv', 'prices.csv']);
      for (const e of list) {
        expect(e.file).not.toMatch(/[\\/]/);
        expect(e.warnings.length).toBeLessThanOrEqual(50);
        expect(e.warningCount).toBeGreaterThanOrEqual(e.warnings.length);
      }
      expect(list.find((e) => e.file === 'prices.csv')!.rowsStored).toBeGreaterThan(0);
    } finally {
      p.store.close();
    }
  });
});
