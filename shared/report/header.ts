/**
 * The sample header every export carries (METHODS section 7: each table can be
 * reproduced from its own header), and the run-record lines beside it.
 */
import type { SampleHeader } from '../results.js';
import type { RunRecord } from '../records/run-record.js';

/** What an export knows about the run it came from (absent for an unsaved result). */
export type ExportRecord = Pick<RunRecord, 'id' | 'kind' | 'createdAt' | 'version' | 'spec' | 'panel' | 'files'> & Partial<Pick<RunRecord, 'subjects' | 'panels'>>;

export interface HeaderLine {
  key: string;
  value: string;
}

/** The sample header as key/value lines, in a fixed order. */
export function sampleHeaderLines(s: SampleHeader): HeaderLine[] {
  const lines: HeaderLine[] = [
    { key: 'model', value: s.model },
    { key: 'method', value: s.method },
    { key: 'stage', value: s.stage },
    { key: 'weighting', value: s.weighting },
    { key: 'returns', value: s.returns },
    { key: 'sample', value: `${s.start} to ${s.end}` },
    { key: 'frequency', value: `${s.frequency} (${s.periodsPerYear} periods per year)` },
    { key: 'T', value: String(s.T) },
    { key: 'N', value: String(s.N) },
    { key: 'K', value: String(s.K) },
    { key: 'lags', value: `${s.lags} (${s.lagsRule})` },
    { key: 'centered', value: s.centered ? 'yes' : 'no' },
    { key: 'assets', value: s.assets.join(', ') },
    { key: 'factors', value: s.factors.length ? s.factors.join(', ') : '(none)' },
  ];
  if (s.instruments) lines.push({ key: 'instruments', value: instrumentText(s) });
  for (const n of s.notes) lines.push({ key: 'note', value: n });
  return lines;
}

/** The record as key/value lines: run id, time, version, panel and file fingerprints. */
export function recordLines(r: ExportRecord): HeaderLine[] {
  const lines: HeaderLine[] = [
    { key: 'run', value: String(r.id) },
    { key: 'kind', value: r.kind },
    { key: 'recorded', value: r.createdAt },
    { key: 'version', value: r.version },
    { key: 'panel sha256', value: r.panel.sha256 },
    {
      key: 'panel',
      value: `${r.panel.frequency} ${r.panel.start} to ${r.panel.end}, T=${r.panel.T} N=${r.panel.N} K=${r.panel.K}, encoding v${r.panel.encoding}`,
    },
  ];
  for (const p of (r.panels ?? []).slice(1)) lines.push({ key: 'panel sha256', value: `${p.sha256} (${p.frequency} ${p.start} to ${p.end}, T=${p.T} N=${p.N} K=${p.K})` });
  for (const f of r.files) lines.push({ key: 'file sha256', value: `${f.sha256} ${f.file} (${f.subjects.join(', ')})` });
  for (const s of r.subjects ?? []) lines.push({ key: 'data sha256', value: `${s.sha256} ${s.kind} ${s.name} (${s.rows} rows)` });
  return lines;
}

/** "const, board_yield (scale returns, lag 1; no period lost to the lag)": the instrument line of a header (METHODS 9). */
export function instrumentText(s: SampleHeader): string {
  const lost = s.lostToLag ?? [];
  return `${(s.instruments ?? []).join(', ')} (scale ${s.instrumentScale ?? 'returns'}, lag ${s.instrumentLag ?? 1}; ${lost.length ? `${lost.length} period(s) lost to the lag: ${lost.join(', ')}` : 'no period lost to the lag'})`;
}
