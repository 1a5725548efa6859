/**
 * Conditioning information (METHODS 9; Cochrane, Asset Pricing, rev. ed. 2005, ch. 8):
 * E_t[m_{t+1} R^e_{t+1}] = 0 implies E[m_{t+1} R^e_{t+1} z_t] = 0 for every z_t known
 * at t, so instruments turn a conditional model into more unconditional moments.
 *
 * `conditionPanel` rewrites a panel whose instruments are aligned (shared/returns
 * buildPanel puts z_{t-lag} at period t) into the panel every estimator already prices:
 *
 * - scaled returns ("managed portfolios"): the test assets become the payoffs
 *   x_{ij,t} = R_{i,t} z_{j,t-lag}, N (1 + J) of them, instrument-major (all N assets
 *   times the constant first, i.e. the plain returns, then all N times z_1, ...). On
 *   gross returns the payoff x_ij costs z_j (E[m x_ij] = E[z_j]); `payoffPrice` gives that
 *   series, and the models subtract it where they subtract 1 for a plain gross return.
 * - scaled factors (a linear model with coefficients linear in z): the factors become
 *   f_{k,t} z_{j,t-lag}, K (1 + J) of them, instrument-major, named "<factor>:<instrument>"
 *   (the plain factors keep their names), so the parameters are b.<factor>:<instrument>
 *   and mu.<factor>:<instrument>.
 *
 * The constant's payoffs and factors are the panel's own arrays (multiplying by 1 would
 * change no bit, and copying is not needed): with the constant alone every number equals
 * the unconditional fit's.
 */
import { DeflatorError } from '../errors.js';
import { qrFactor } from '../linalg/qr.js';
import type { Conditioning, ReturnsPanel, ScaledPart } from '../panel.js';
import type { ResultWarning, SampleHeader } from '../results.js';
import { instrumentLevelWarning } from '../warnings.js';
import { CONSTANT_INSTRUMENT, type FitSpec } from '../spec.js';

/** "<base>:<instrument>", or the base name alone for the constant. */
export function scaledName(part: ScaledPart): string {
  return part.z < 0 ? part.base : `${part.base}:${part.instrument}`;
}

function times(x: Float64Array, z: Float64Array): Float64Array {
  const out = new Float64Array(x.length);
  for (let t = 0; t < x.length; t++) out[t] = x[t] * z[t];
  return out;
}

/**
 * The instruments must not be collinear with each other or with the constant: scaled
 * moments of collinear instruments repeat one another, so S and E[xx'] are singular.
 * Checked by a Householder QR of [1, z_1, .., z_J] (the rank rule of shared/linalg/qr.ts,
 * relative to each column's own norm, so the units of a series do not matter).
 */
export function checkInstruments(panel: ReturnsPanel): void {
  const ins = panel.instruments;
  if (!ins || ins.series.length === 0) return;
  const T = panel.periods.length;
  const p = ins.series.length + 1;
  const data = new Float64Array(T * p);
  for (let t = 0; t < T; t++) {
    data[t * p] = 1;
    ins.series.forEach((z, j) => {
      data[t * p + j + 1] = z.values[t];
    });
  }
  qrFactor(
    { rows: T, cols: p, data },
    { name: `the instruments [${[CONSTANT_INSTRUMENT, ...ins.series.map((z) => z.name)].join(', ')}] (spec.instruments.series) make the scaled moments collinear`, labels: [CONSTANT_INSTRUMENT, ...ins.series.map((z) => z.name)] },
  );
}

/**
 * The panel with the spec's instruments applied (see the file comment). A panel without
 * `spec.instruments` is returned as it is; a panel that is already conditioned too.
 * With "includeRiskfree" the risk-free asset is a test asset before scaling, so its
 * scaled payoffs are priced as well.
 */
export function conditionPanel(spec: FitSpec, panel: ReturnsPanel): ReturnsPanel {
  if (panel.conditioning || !spec.instruments) return panel;
  const ins = spec.instruments;
  const have = panel.instruments;
  const got = have?.series.map((z) => z.name) ?? [];
  if (ins.series.length > 0 && (!have || got.join('\u0000') !== ins.series.join('\u0000') || have.lag !== ins.lag)) {
    throw new DeflatorError(
      'DATA_MISSING',
      `spec.instruments names ${ins.series.map((z) => `"${z}"`).join(', ')} at lag ${ins.lag}, but the panel holds ${got.length ? `${got.map((z) => `"${z}"`).join(', ')} at lag ${have?.lag}` : 'no instruments'}`,
      'build the panel from the same spec (the panel loader aligns the instruments)',
    );
  }
  checkInstruments(panel);
  const series = have?.series ?? [];
  const zs: { name: string; z: number; values?: Float64Array }[] = [
    { name: CONSTANT_INSTRUMENT, z: -1 },
    ...series.map((s, j) => ({ name: s.name, z: j, values: s.values })),
  ];
  const scaleReturns = ins.scale === 'returns' || ins.scale === 'both';
  const scaleFactors = ins.scale === 'factors' || ins.scale === 'both';

  const baseAssets = [...panel.assets];
  const baseReturns = [...panel.returns];
  if (spec.includeRiskfree) {
    const name = spec.riskfree ?? 'riskfree';
    if (!panel.riskfreeGross) throw new DeflatorError('DATA_MISSING', `includeRiskfree is set but the panel has no risk-free series "${name}"`, 'name the risk-free series in "riskfree"');
    if (!baseAssets.includes(name)) {
      baseAssets.push(name);
      baseReturns.push(panel.riskfreeGross);
    }
  }
  const payoffs: ScaledPart[] = [];
  const returns: Float64Array[] = [];
  for (const z of scaleReturns ? zs : zs.slice(0, 1)) {
    baseAssets.forEach((a, i) => {
      payoffs.push({ base: a, instrument: z.name, z: z.z });
      returns.push(z.values ? times(baseReturns[i], z.values) : baseReturns[i]);
    });
  }
  const baseFactors = spec.model.kind === 'consumption' ? [] : [...spec.model.factors];
  const factorParts: ScaledPart[] = [];
  const factors: { name: string; values: Float64Array }[] = [];
  for (const z of scaleFactors ? zs : zs.slice(0, 1)) {
    for (const name of baseFactors) {
      const f = panel.factors.find((x) => x.name === name);
      if (!f) throw new DeflatorError('DATA_MISSING', `factor "${name}" is not in the panel (it has: ${panel.factors.map((x) => x.name).join(', ') || 'none'})`, 'import the factor series or fix model.factors');
      const part = { base: name, instrument: z.name, z: z.z };
      factorParts.push(part);
      factors.push({ name: scaledName(part), values: z.values ? times(f.values, z.values) : f.values });
    }
  }
  const names = payoffs.map(scaledName);
  const dupe = names.find((n, i) => names.indexOf(n) !== i);
  if (dupe) throw new DeflatorError('CONFLICT', `the scaled payoff "${dupe}" is named twice (a test asset's name already ends in ":<instrument>")`, 'rename the test asset or the instrument');
  const conditioning: Conditioning = {
    scale: ins.scale,
    lag: ins.lag,
    instruments: zs.map((z) => z.name),
    payoffs,
    factorParts,
    baseAssets,
    baseFactors,
    lost: have?.lost ?? [],
  };
  // Price ratios (drift splits) belong to the unscaled test assets; the estimators do not read them.
  const { priceRatios: _unused, ...rest } = panel;
  return { ...rest, assets: names, returns, factors, conditioning };
}

/** The key of a pricing-error row on a conditioned panel: its payoff's name (the asset alone for the constant). */
export function payoffKey(row: { asset: string; instrument?: string }): string {
  return row.instrument === undefined || row.instrument === CONSTANT_INSTRUMENT ? row.asset : `${row.asset}:${row.instrument}`;
}

/** The price series of each test asset of a panel where it is not 1 (gross payoffs scaled by an instrument); null elsewhere. */
export function payoffPrices(panel: ReturnsPanel): (Float64Array | null)[] | undefined {
  const c = panel.conditioning;
  if (!c || panel.returnKind !== 'gross' || !c.payoffs.some((p) => p.z >= 0)) return undefined;
  const series = panel.instruments?.series ?? [];
  return c.payoffs.map((p) => (p.z < 0 ? null : series[p.z].values));
}

/** The model's factor names on a panel: the scaled ones of a conditioned panel, else the spec's. */
export function modelFactorNames(spec: FitSpec, panel: ReturnsPanel): string[] {
  if (spec.model.kind === 'consumption') return [];
  return panel.conditioning ? panel.factors.map((f) => f.name) : spec.model.factors;
}

/** The sample header's instrument keys (METHODS 9): which, how and at what lag, and the periods the lag cost. */
export function instrumentHeader(c: Conditioning): Pick<SampleHeader, 'instruments' | 'instrumentScale' | 'instrumentLag' | 'lostToLag'> {
  return { instruments: [...c.instruments], instrumentScale: c.scale, instrumentLag: c.lag, lostToLag: [...c.lost] };
}

/** Mean price of a payoff over periods [from, to): 1 for a plain gross return, the mean of z for a return scaled by z. */
export function meanPrice(z: Float64Array | null, from: number, to: number): number {
  if (!z) return 1;
  let s = 0;
  for (let t = from; t < to; t++) s += z[t];
  return s / (to - from);
}

/** INSTRUMENT_LEVEL warnings of a conditioned panel whose factors are scaled (shared/warnings.ts). */
export function instrumentWarnings(c: Conditioning | undefined, instruments: ReturnsPanel['instruments']): ResultWarning[] {
  if (!c || c.scale === 'returns' || c.baseFactors.length === 0) return [];
  const out: ResultWarning[] = [];
  for (const z of instruments?.series ?? []) {
    const T = z.values.length;
    let m = 0;
    for (let t = 0; t < T; t++) m += z.values[t];
    m /= T;
    let v = 0;
    for (let t = 0; t < T; t++) v += (z.values[t] - m) ** 2;
    const w = instrumentLevelWarning(z.name, m, Math.sqrt(v / T));
    if (w) out.push(w);
  }
  return out;
}
