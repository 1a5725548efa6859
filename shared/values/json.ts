/**
 * The JSON the `present-value` and `drift` commands print with --json: exactly the keys
 * documented in README.md (a contract scripts rely on), plus `warnings`. The full result
 * (series, covariance, notes) is in the run record (`deflator show RUN --json`).
 */
import type { DriftResult, PresentValueResult, ResultWarning } from '../results.js';

export interface PresentValueJson {
  asset?: string;
  assets?: string[];
  frequency: 'annual';
  sample: { first: string; last: string; T: number };
  rho: number;
  regressions: Record<'r' | 'dd' | 'dp', { a: number; b: number; seB: number; r2: number }>;
  identity: { value: number; gap: number };
  longRun: { r: { b: number; se: number }; dd: { b: number; se: number } };
  varianceShares: { r: number; dd: number };
  warnings: ResultWarning[];
}

export function presentValueJson(r: PresentValueResult): PresentValueJson {
  const reg = (k: 'r' | 'dd' | 'dp') => ({ a: r.regressions[k].a, b: r.regressions[k].b, seB: r.regressions[k].seB, r2: r.regressions[k].r2 });
  return {
    ...(r.assets ? { assets: [...r.assets] } : { asset: r.asset as string }),
    frequency: r.frequency,
    sample: { first: r.sample.first, last: r.sample.last, T: r.sample.T },
    rho: r.rho,
    regressions: { r: reg('r'), dd: reg('dd'), dp: reg('dp') },
    identity: { value: r.identity.value, gap: r.identity.gap },
    longRun: { r: { b: r.longRun.r.b, se: r.longRun.r.se }, dd: { b: r.longRun.dd.b, se: r.longRun.dd.se } },
    varianceShares: { r: r.varianceShares.r, dd: r.varianceShares.dd },
    warnings: r.warnings.map((w) => ({ code: w.code, message: w.message })),
  };
}

export interface DriftJson {
  frequency: string;
  assets: {
    asset: string;
    drift: number;
    priceGrowth: number | null;
    dividendYield: number | null;
    sigma: number;
    logDrift: number;
    se: { drift: number; priceGrowth: number | null; dividendYield: number | null };
  }[];
  sample: { first: string; last: string; T: number };
  warnings: ResultWarning[];
}

export function driftJson(r: DriftResult): DriftJson {
  return {
    frequency: r.frequency,
    assets: r.assets.map((a) => ({
      asset: a.asset,
      drift: a.drift,
      priceGrowth: a.priceGrowth,
      dividendYield: a.dividendYield,
      sigma: a.sigma,
      logDrift: a.logDrift,
      se: { drift: a.se.drift, priceGrowth: a.se.priceGrowth, dividendYield: a.se.dividendYield },
    })),
    sample: { first: r.sample.first, last: r.sample.last, T: r.sample.T },
    warnings: r.warnings.map((w) => ({ code: w.code, message: w.message })),
  };
}
