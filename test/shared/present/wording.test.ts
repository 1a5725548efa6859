/**
 * Wording of the presentation model: what the header and notes say matches the result
 * (no note about estimates a table does not hold, no rule said twice, a back-test's
 * weighting described as the stage it runs, titles kept as written inside a sentence).
 * The results are the seeded export samples; the expected words follow from the shared
 * conventions in docs/methods.md.
 */
import { describe, expect, it } from 'vitest';
import { present } from '../../../shared/present/index.js';
import { backtestWeighting } from '../../../shared/present/backtest.js';
import { resultToText } from '../../../shared/report/text.js';
import { sampleBacktest, sampleFit } from '../report/sample-results.js';

describe('presentation wording', () => {
  it("a back-test's weighting line names the stage each window runs, not only its first-stage weight", () => {
    const bt = sampleBacktest();
    const line = present(bt).header.find((l) => l.key === 'weighting')!;
    expect(bt.sample.stage).toBe('second');
    expect(line.value).toBe("second stage in each window, W = S^-1 with S from the window's first stage (W = I)");
    expect(backtestWeighting('first', 'hj')).toBe("first stage in each window, W = (E[RR'])^-1 (Hansen-Jagannathan)");
  });

  it("a back-test's notes do not repeat the window rule of the header or the R^2 benchmark of the summary's note", () => {
    const bt = sampleBacktest();
    bt.sample.notes = [
      'back-test: rolling windows of 24 periods, step 1, 1 held-out period(s) each',
      'engine: incremental (rolling cross-moment sums)',
      'in-sample and out-of-sample R^2 both against the zero-alpha benchmark m = 1',
    ];
    const p = present(bt);
    expect(p.notes).toEqual(['engine: incremental (rolling cross-moment sums)']);
    expect(p.header.find((l) => l.key === 'windows')).toBeDefined();
  });

  it('the parameter note names only the kinds of estimate the table holds', () => {
    const linear = present(sampleFit()).tables.find((t) => t.id === 'parameters')!;
    expect(linear.notes.join(' ')).toContain('Factor means (mu) and risk premia (lambda) are per month, as decimals.');
    const r = sampleFit();
    r.params = r.params.filter((p) => p.name.startsWith('b.'));
    const only = present(r).tables.find((t) => t.id === 'parameters')!;
    expect(only.notes.join(' ')).not.toMatch(/mu|lambda|constants/);
  });

  it('the list of tables left out of the terminal keeps their symbols as written (m_t, G_t, R^e_s)', () => {
    const r = sampleFit();
    r.sdf = { periods: ['2031-01-31', '2031-02-28'], values: [0.99, 1.01], mean: 1, std: 0.01 };
    r.discounted = { form: 'gains', periods: r.sdf.periods, series: { A: [0.01, 0.02] } };
    const text = resultToText(r);
    const line = text.split('\n').find((l) => l.startsWith('Not printed here:'))!;
    expect(line).toContain('fitted discount factor m_t, discounted gains G_t = sum of m_s R^e_s');
    expect(line).not.toMatch(/\bg_t\b|r\^e_s/);
  });
});

describe('notes in the words of the headings', () => {
  it('stored notes that name result fields (seShanken, seHac) or spell centred otherwise read as the column headings do', () => {
    const r = sampleFit();
    r.params[4].note = 'Fama-MacBeth s.e. (time s.d. of the period estimates); seShanken: Shanken (1992) correction';
    r.notes = ['Pricing errors are the time-series intercepts; seHac beside them uses Newey-West.', 'Newey-West (Bartlett; centered, divide by T).'];
    const text = resultToText(r);
    expect(text).toContain('s.e. (Shanken): Shanken (1992) correction');
    expect(text).toContain('s.e. (HAC) beside them');
    expect(text).toContain('centred, divide by T');
    expect(text).not.toMatch(/seShanken|seHac|centered/);
  });
});
