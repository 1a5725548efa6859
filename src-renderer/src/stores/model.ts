/**
 * The model set-up form and the spec JSON it stands for: the same spec the CLI reads
 * (shared/spec.ts), validated on every change, saved and loaded as JSON.
 */
import { defineStore } from 'pinia';
import { DeflatorError } from '../../../shared/errors.js';
import { FREQUENCIES } from '../../../shared/data.js';
import type { Frequency } from '../../../shared/data.js';
import { defaultModelLabel, isCompareSpec, parseCompareSpec, parseFitSpec, specJson } from '../../../shared/spec.js';
import type { FitSpec, FitSpecInput, CompareSpec, InstrumentScale } from '../../../shared/spec.js';
import { fieldsOf } from '../lib/errors.js';
import { bridge } from '../bridge/index.js';
import type { SamplePreview } from '../../../shared/bridge/index.js';

/** JSON.stringify with 2-space indent, lists of plain values kept on one line. */
export function compactJson(value: unknown): string {
  const scalar = String.raw`(?:"(?:[^"\\]|\\.)*"|-?\d+(?:\.\d+)?(?:[eE][-+]?\d+)?|true|false|null)`;
  const list = new RegExp(String.raw`\[\s*(${scalar}(?:,\s*${scalar})*)\s*\]`, 'g');
  return JSON.stringify(value, null, 2).replace(list, (_m, inner: string) => `[${inner.replace(/,\s+/g, ', ')}]`);
}

export type ModelKind = 'linear' | 'linear-raw' | 'linear-gross' | 'consumption';
export type Method = 'gmm' | 'time-series' | 'two-pass';
export type Stage = 'first' | 'second' | 'iterated' | 'cue';

export interface CompareEntry {
  label: string;
  model: FitSpec['model'];
  estimator: FitSpec['estimator'];
  /** This model's instruments, where the set-up had them on. */
  instruments?: FitSpec['instruments'];
}

function defaults() {
  return {
    label: '',
    frequency: 'monthly' as Frequency,
    start: '',
    end: '',
    assetsMode: 'list' as 'all' | 'list',
    assets: [] as string[],
    returns: 'excess' as 'excess' | 'gross',
    riskfree: '',
    includeRiskfree: false,
    kind: 'linear' as ModelKind,
    factors: [] as string[],
    consumption: '',
    delta: null as number | null,
    method: 'gmm' as Method,
    stage: 'second' as Stage,
    weight: 'identity' as 'identity' | 'hj',
    lagsAuto: true,
    lags: 3,
    centered: true,
    backtestOn: true,
    window: 60,
    step: 1,
    horizon: 1,
    expanding: false,
    /** Conditioning information (docs/spec.md, instruments): off leaves the key out. */
    instrumentsOn: false,
    instruments: [] as string[],
    instrumentScale: 'returns' as InstrumentScale,
    instrumentLag: 1,
  };
}

export type ModelForm = ReturnType<typeof defaults>;

let previewTimer: ReturnType<typeof setTimeout> | undefined;

export const useModelStore = defineStore('model', {
  state: () => ({
    form: defaults(),
    compareSet: [] as CompareEntry[],
    /** A model waiting for the user to confirm that it replaces the one with its label. */
    pendingReplace: null as CompareEntry | null,
    /** The sample the current spec gives on the stored data (periods and the lags "auto" uses); null while unknown. */
    preview: null as SamplePreview | null,
    previewFor: '',
    loadError: null as string | null,
    touched: false,
  }),
  getters: {
    /** The spec JSON for a fit or back-test (a back-test is a fit spec with a "backtest" key). */
    spec(s): FitSpecInput {
      const f = s.form;
      const spec: FitSpecInput = {
        frequency: f.frequency,
        assets: f.assetsMode === 'all' ? 'all' : [...f.assets],
        returns: f.returns,
        model: { kind: f.kind, factors: f.kind === 'consumption' ? [] : [...f.factors] },
        estimator: {
          method: f.method,
          stage: f.stage,
          weight: f.weight,
          lags: f.lagsAuto ? 'auto' : f.lags,
          centered: f.centered,
        },
      };
      if (f.label.trim()) spec.label = f.label.trim();
      if (f.start) spec.start = f.start;
      if (f.end) spec.end = f.end;
      if (f.riskfree) spec.riskfree = f.riskfree;
      if (f.includeRiskfree) spec.includeRiskfree = true;
      if (f.kind === 'consumption' && f.consumption) spec.model.consumption = f.consumption;
      if (f.kind === 'consumption' && f.delta !== null && f.returns === 'excess') spec.model.delta = f.delta;
      if (f.instrumentsOn) spec.instruments = { series: [...f.instruments], scale: f.instrumentScale, lag: f.instrumentLag };
      if (f.backtestOn) spec.backtest = { window: f.window, step: f.step, horizon: f.horizon, expanding: f.expanding };
      return spec;
    },
    /** The same spec without the back-test key, for a plain fit. */
    fitSpec(): FitSpecInput {
      const { backtest: _bt, ...rest } = this.spec;
      return rest;
    },
    /** Spec key -> problem, from the shared spec validator; empty when the spec is valid. */
    problems(): Record<string, string> {
      try {
        parseFitSpec(JSON.parse(JSON.stringify(this.spec)));
        return {};
      } catch (e) {
        if (e instanceof DeflatorError) {
          const f = fieldsOf(e.message);
          return Object.keys(f).length ? f : { spec: e.message };
        }
        return { spec: String(e) };
      }
    },
    valid(): boolean {
      return Object.keys(this.problems).length === 0;
    },
    /** The spec as saved and shown: indented, with short lists (assets, factors) on one line. */
    specText(): string {
      return compactJson(this.spec);
    },
    /** Comparison spec: the set-up's sample with each saved model. */
    compareSpec(s): Record<string, unknown> | null {
      if (s.compareSet.length === 0) return null;
      const base = this.spec;
      const out: Record<string, unknown> = {
        frequency: base.frequency,
        assets: base.assets,
        returns: base.returns,
        compare: s.compareSet.map((e) => ({ label: e.label, model: e.model, estimator: e.estimator, ...(e.instruments ? { instruments: e.instruments } : {}) })),
      };
      if (base.start) out.start = base.start;
      if (base.end) out.end = base.end;
      if (base.riskfree) out.riskfree = base.riskfree;
      if (base.backtest) out.backtest = base.backtest;
      return out;
    },
    label(): string {
      const f = this.form;
      if (f.label.trim()) return f.label.trim();
      const base = f.kind === 'consumption' ? `consumption(${f.consumption})` : `${f.kind}(${f.factors.join(',')})`;
      // Instruments change the moments (and with scaled factors the model): a label of their own.
      return f.instrumentsOn ? `${base} | z: ${['const', ...f.instruments].join(',')}, scale ${f.instrumentScale}` : base;
    },
  },
  actions: {
    /** First sensible choices from what the project holds (only where the form is still empty). */
    suggest(names: { testAssets: string[]; portfolios: string[]; factors: string[]; riskfree: string[]; consumption: string[] }): void {
      const f = this.form;
      if (this.touched) return;
      if (f.assets.length === 0) f.assets = names.portfolios.length ? [...names.portfolios] : [...names.testAssets];
      if (!f.riskfree && names.riskfree.length) f.riskfree = names.riskfree[0];
      // Factors are the model: none is chosen for the user (the set-up asks for them).
      if (!f.consumption && names.consumption.length) f.consumption = names.consumption[0];
    },
    setKind(kind: ModelKind): void {
      const f = this.form;
      f.kind = kind;
      if (kind === 'linear-gross') f.returns = 'gross';
      if (kind === 'linear' || kind === 'linear-raw') f.returns = 'excess';
      if (kind !== 'linear') f.method = 'gmm';
      if (kind !== 'consumption') f.delta = null;
      this.touched = true;
    },
    toggle(list: 'assets' | 'factors' | 'instruments', name: string): void {
      const arr = this.form[list];
      const i = arr.indexOf(name);
      if (i >= 0) arr.splice(i, 1);
      else arr.push(name);
      this.touched = true;
    },
    /**
     * Adds the set-up's model to the comparison. Unlabelled, its label names the model and
     * its estimator, so the same model at another stage is another entry. A different
     * model under a label already in the set waits in `pendingReplace` for the user.
     */
    addToComparison(): 'added' | 'unchanged' | 'ask' {
      const spec = parseFitSpec(JSON.parse(JSON.stringify(this.spec)));
      const label = this.form.label.trim() || defaultModelLabel(spec.model, spec.estimator, spec.instruments);
      const entry: CompareEntry = { label, model: spec.model, estimator: spec.estimator, ...(spec.instruments ? { instruments: spec.instruments } : {}) };
      const i = this.compareSet.findIndex((e) => e.label === label);
      if (i < 0) {
        this.compareSet.push(entry);
        return 'added';
      }
      if (JSON.stringify(this.compareSet[i]) === JSON.stringify(entry)) return 'unchanged';
      this.pendingReplace = entry;
      return 'ask';
    },
    /** The user's answer to "replace the model with this label?". */
    resolveReplace(replace: boolean): void {
      const entry = this.pendingReplace;
      this.pendingReplace = null;
      if (!replace || !entry) return;
      const i = this.compareSet.findIndex((e) => e.label === entry.label);
      if (i >= 0) this.compareSet.splice(i, 1, entry);
    },
    /**
     * Asks for the preview once the set-up has been still for a moment (loading a panel takes
     * the server a while; a run started meanwhile cancels the pending request).
     */
    schedulePreview(delayMs = 600): void {
      if (previewTimer) clearTimeout(previewTimer);
      previewTimer = setTimeout(() => {
        previewTimer = undefined;
        void this.refreshPreview();
      }, delayMs);
    },
    cancelPreview(): void {
      if (previewTimer) clearTimeout(previewTimer);
      previewTimer = undefined;
    },
    /** Asks the project which sample (and lag count) the current spec gives; stale replies are dropped. */
    async refreshPreview(): Promise<void> {
      if (!this.valid) {
        this.preview = null;
        return;
      }
      const key = JSON.stringify(this.fitSpec);
      if (key === this.previewFor) return;
      this.previewFor = key;
      try {
        const p = await bridge().samplePreview({ spec: JSON.parse(key) });
        if (this.previewFor === key) this.preview = p;
      } catch {
        if (this.previewFor === key) this.preview = null;
      }
    },
    /** Chooses every stored factor, or none. */
    setAllFactors(names: string[]): void {
      this.form.factors = [...names];
      this.touched = true;
    },
    removeFromComparison(label: string): void {
      this.compareSet = this.compareSet.filter((e) => e.label !== label);
    },
    /** Fills the form from spec JSON (a fit spec, or a comparison whose models join the comparison set). */
    loadSpecText(text: string): boolean {
      this.loadError = null;
      let raw: unknown;
      try {
        raw = specJson(text, 'the file'); // a leading byte-order mark is fine
      } catch (e) {
        this.loadError = e instanceof Error ? e.message : String(e);
        return false;
      }
      try {
        if (isCompareSpec(raw)) {
          const { spec, fits } = parseCompareSpec(raw);
          this.applySample(spec);
          this.applyModel(fits[0]);
          this.compareSet = fits.map((fs) => ({ label: fs.label ?? '', model: fs.model, estimator: fs.estimator, ...(fs.instruments ? { instruments: fs.instruments } : {}) }));
        } else {
          const spec = parseFitSpec(raw);
          this.applySample(spec);
          this.applyModel(spec);
        }
        this.touched = true;
        return true;
      } catch (e) {
        this.loadError = e instanceof Error ? e.message : String(e);
        return false;
      }
    },
    applySample(spec: FitSpec | CompareSpec): void {
      const f = this.form;
      if (!FREQUENCIES.includes(spec.frequency)) return;
      f.frequency = spec.frequency;
      f.start = spec.start ?? '';
      f.end = spec.end ?? '';
      f.assetsMode = spec.assets === 'all' ? 'all' : 'list';
      if (spec.assets !== 'all') f.assets = [...spec.assets];
      f.returns = spec.returns;
      f.riskfree = spec.riskfree ?? '';
      f.includeRiskfree = spec.includeRiskfree;
      if (spec.backtest) {
        f.backtestOn = true;
        f.window = spec.backtest.window;
        f.step = spec.backtest.step;
        f.horizon = spec.backtest.horizon;
        f.expanding = spec.backtest.expanding;
      }
    },
    applyModel(spec: FitSpec): void {
      const f = this.form;
      f.label = spec.label ?? '';
      f.kind = spec.model.kind;
      f.factors = [...spec.model.factors];
      f.consumption = spec.model.consumption ?? f.consumption;
      f.delta = spec.model.delta ?? null;
      f.method = spec.estimator.method;
      f.stage = spec.estimator.stage;
      f.weight = spec.estimator.weight;
      f.lagsAuto = spec.estimator.lags === 'auto';
      if (spec.estimator.lags !== 'auto') f.lags = spec.estimator.lags;
      f.centered = spec.estimator.centered;
      f.instrumentsOn = spec.instruments !== undefined;
      f.instruments = [...(spec.instruments?.series ?? [])];
      f.instrumentScale = spec.instruments?.scale ?? 'returns';
      f.instrumentLag = spec.instruments?.lag ?? 1;
    },
    reset(): void {
      Object.assign(this.form, defaults());
      this.touched = false;
    },
  },
});
