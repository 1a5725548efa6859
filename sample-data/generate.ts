/**
 * Generates the demo data in this folder: an invented market (see README.md), seeded and
 * deterministic, so `npx tsx sample-data/generate.ts` rewrites the same bytes every time.
 *
 * Monthly scenario: 30 listed companies, Dec 2000 - Dec 2024, prices and dividends (some
 * quarterly, some annual, some none), two splits; three traded factors (excess returns)
 * that price the companies by construction: R^e_i = alpha_i + beta_i'f + e_i, alpha small;
 * a treasury bill yield (percent, annual compounding) and a money-market account level
 * that earn the same per-period rate; a household consumption level whose growth moves
 * with the broad factor; two instruments (a dividend yield and a term spread, from their
 * own seeded stream) that predict the factors a little. Daily scenario: four ferry
 * operators over two years, wide layout.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { mulberry32 } from '../shared/random.js';

const here = import.meta.dirname;

const rng = mulberry32;

/** Standard normal draws by Box-Muller from a uniform stream (each stream keeps its own spare). */
function normalStream(uniform: () => number): () => number {
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    let u = 0;
    while (u === 0) u = uniform();
    const v = uniform();
    const r = Math.sqrt(-2 * Math.log(u));
    spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
}

const uniform = rng(20240917);
const normal = normalStream(uniform);
const between = (lo: number, hi: number) => lo + (hi - lo) * uniform();
const round = (x: number, d: number) => Number(x.toFixed(d));
const iso = (d: Date) => d.toISOString().slice(0, 10);

/** Last weekday of each month from (y0, m0) to (y1, m1), months 1-based. */
function monthEnds(y0: number, m0: number, y1: number, m1: number): string[] {
  const out: string[] = [];
  for (let y = y0, m = m0; y < y1 || (y === y1 && m <= m1); m === 12 ? ((m = 1), y++) : m++) {
    const d = new Date(Date.UTC(y, m, 0));
    while (d.getUTCDay() === 0 || d.getUTCDay() === 6) d.setUTCDate(d.getUTCDate() - 1);
    out.push(iso(d));
  }
  return out;
}

// ---------------------------------------------------------------- monthly scenario
const dates = monthEnds(2000, 12, 2024, 12); // index 0 = first close, returns from index 1
const T = dates.length - 1;

// Risk-free: an annual bill yield that mean-reverts around 3%; the per-period rate of
// month t+1 is fixed by the yield quoted at the end of month t (METHODS 1 timing).
const yieldPct: number[] = [];
let y = 4.2;
for (let t = 0; t <= T; t++) {
  y = Math.max(0.05, y + 0.04 * (3.0 - y) + 0.18 * normal());
  yieldPct.push(round(y, 4));
}
const rf: number[] = [0]; // rf[t] earned over month t, t >= 1
for (let t = 1; t <= T; t++) rf.push(Math.pow(1 + yieldPct[t - 1] / 100, 1 / 12) - 1);
const account: number[] = [100];
for (let t = 1; t <= T; t++) account.push(account[t - 1] * (1 + rf[t]));

// Three traded factors (monthly excess returns), correlated through a lower-triangular mix.
const factorNames = ['harbor', 'ember', 'ledger'] as const;
const factorMean = [0.0055, 0.0018, 0.0027];
const mix = [
  [0.044, 0, 0],
  [0.009, 0.027, 0],
  [-0.006, 0.004, 0.026],
];
const factors: number[][] = [[0, 0, 0]];
for (let t = 1; t <= T; t++) {
  const z = [normal(), normal(), normal()];
  factors.push(factorMean.map((mu, k) => round(mu + mix[k][0] * z[0] + mix[k][1] * z[1] + mix[k][2] * z[2], 6)));
}

// Household consumption level: log growth moves with the broad factor.
const consumption: number[] = [1000];
for (let t = 1; t <= T; t++) {
  const g = 0.0016 + 0.035 * (factors[t][0] - factorMean[0]) + 0.0028 * normal();
  consumption.push(consumption[t - 1] * Math.exp(g));
}

const companies = [
  'brinemoor-ferries', 'corvane-saltworks', 'eddisholm-glass', 'fallowmere-grain', 'gullhaven-cables',
  'harrowind-timber', 'islet-ropeworks', 'juniper-quay-foods', 'kestrelmark-mills', 'lanternfold-power',
  'marrowby-textiles', 'northwick-kelp', 'oystercairn-shipping', 'pellworth-ceramics', 'quillfen-paper',
  'rookstone-quarries', 'saltbriar-brewing', 'tidewrack-salvage', 'umberlee-dyes', 'vantholm-water',
  'wrenfirth-looms', 'yarrowgate-tiles', 'ashcombe-lamps', 'brackenholt-rail', 'cindervale-metals',
  'duskwater-fisheries', 'emberlyn-clocks', 'foxmere-printing', 'greyhallow-banking', 'hollowtide-insurance',
];
type Payout = 'quarterly' | 'annual' | 'none';
const payout = (i: number): Payout => (i % 5 === 3 || i % 7 === 6 ? 'none' : i % 6 === 5 ? 'annual' : 'quarterly');
const splits: Record<string, { date: string; factor: number }> = {
  'lanternfold-power': { date: '2009-06-30', factor: 2 },
  'greyhallow-banking': { date: '2017-03-31', factor: 3 },
};

const priceRows: string[] = ['date,asset,price,dividend,adjust,shares'];
const table: { asset: string; values: string[] }[] = [];
interface AssetPath {
  price: number[];
  dividend: number[];
  adjust: number[];
  shares: number[];
}
const paths: AssetPath[] = companies.map((name, i) => {
  const beta = [between(0.6, 1.45), between(-0.4, 1.1), between(-0.6, 0.9)];
  const alpha = 0.0007 * normal();
  const idio = between(0.028, 0.065);
  const kind = payout(i);
  const yieldQ = kind === 'none' ? 0 : between(0.003, 0.011) * (kind === 'annual' ? 3 : 1);
  const split = splits[name];
  let price = round(between(8, 120), 2);
  let shares = Math.round(between(2e7, 5e8) / 1000) * 1000;
  const p: AssetPath = { price: [price], dividend: [0], adjust: [1], shares: [shares] };
  for (let t = 1; t <= T; t++) {
    const month = Number(dates[t].slice(5, 7));
    const excess = alpha + beta[0] * factors[t][0] + beta[1] * factors[t][1] + beta[2] * factors[t][2] + idio * normal();
    const value = price * Math.max(0.05, 1 + rf[t] + excess); // cum-dividend value per share
    const pays = kind === 'quarterly' ? month % 3 === 0 : kind === 'annual' ? month === 5 : false;
    const cash = pays ? value * yieldQ : 0;
    let next = value - cash;
    let adjust = 1;
    if (split && split.date === dates[t]) {
      // On and after the split date, prices and dividends are per new share.
      adjust = split.factor;
      next /= split.factor;
      shares *= split.factor;
    }
    const dividend = round(cash / adjust, 4);
    if (uniform() < 0.01) shares = Math.round((shares * between(1.01, 1.08)) / 1000) * 1000; // occasional issuance
    price = round(Math.max(0.01, next), 2);
    p.price.push(price);
    p.dividend.push(dividend);
    p.adjust.push(adjust);
    p.shares.push(shares);
  }
  table.push({ asset: name, values: [kind, beta.map((b) => b.toFixed(3)).join(' '), alpha.toFixed(5), idio.toFixed(4)] });
  return p;
});
for (let t = 0; t <= T; t++) {
  companies.forEach((name, i) => {
    const q = paths[i];
    const div = q.dividend[t] === 0 ? '' : String(q.dividend[t]);
    const adj = q.adjust[t] === 1 ? '' : String(q.adjust[t]);
    priceRows.push(`${dates[t]},${name},${q.price[t].toFixed(2)},${div},${adj},${q.shares[t]}`);
  });
}

const factorRows = ['date,' + factorNames.join(',')];
for (let t = 1; t <= T; t++) factorRows.push(`${dates[t]},${factors[t].map((v) => v.toFixed(6)).join(',')}`);
const yieldRows = ['date,bill_yield'];
for (let t = 0; t <= T; t++) yieldRows.push(`${dates[t]},${yieldPct[t].toFixed(4)}`);
const accountRows = ['date,mm_account'];
for (let t = 0; t <= T; t++) accountRows.push(`${dates[t]},${account[t].toFixed(8)}`);
const consumptionRows = ['date,household_spending'];
for (let t = 0; t <= T; t++) consumptionRows.push(`${dates[t]},${consumption[t].toFixed(4)}`);

// ---------------------------------------------------------------- daily scenario
// Four ferry operators, wide layout, weekdays of 2023-2024 minus the island's own holidays.
const holidays = new Set(['01-02', '04-14', '06-21', '08-30', '12-25', '12-26']);
const days: string[] = [];
for (let d = new Date(Date.UTC(2023, 0, 2)); d <= new Date(Date.UTC(2024, 11, 31)); d.setUTCDate(d.getUTCDate() + 1)) {
  const wd = d.getUTCDay();
  if (wd === 0 || wd === 6 || holidays.has(iso(d).slice(5))) continue;
  days.push(iso(d));
}
const ferries = ['sealark-ferries', 'mistral-crossings', 'pebblebay-line', 'stormgull-shipping'];
const dailyPrice = ['date,' + ferries.join(',')];
const dailyDiv = ['date,' + ferries.join(',')];
const dailyAccount = ['date,overnight_account'];
const level = ferries.map(() => round(between(15, 60), 2));
let overnight = 1;
for (let t = 0; t < days.length; t++) {
  const market = 0.0003 + 0.009 * normal();
  if (t > 0) overnight *= 1 + 0.03 / 252;
  const divs: string[] = [];
  const prices = level.map((p, j) => {
    if (t === 0) {
      divs.push('');
      return p;
    }
    const value = p * (1 + 0.03 / 252 + (0.8 + 0.15 * j) * market + 0.012 * normal());
    const paysNow = j < 3 && (t + 17 * j) % 63 === 0;
    const d = paysNow ? round(value * 0.006, 4) : 0;
    divs.push(d === 0 ? '' : String(d));
    level[j] = round(value - d, 2);
    return level[j];
  });
  dailyPrice.push(`${days[t]},${prices.map((p) => p.toFixed(2)).join(',')}`);
  dailyDiv.push(`${days[t]},${divs.join(',')}`);
  dailyAccount.push(`${days[t]},${overnight.toFixed(10)}`);
}

// ---------------------------------------------------------------- monthly instruments
// Conditioning information for the monthly set, from a stream of its own so that every
// file above keeps its bytes. Two series observed at month ends (dates[0..T]): the board's
// dividend yield, a valuation ratio of about 3.5% moving slowly, and the spread of long
// over short bill yields, about 1.2%. Each month's innovation leans a little towards the
// next month's factor return (the yield towards harbor, the spread towards ember), so the
// series predict returns a little (correlation of 0.14 and 0.2 with the next month's factor),
// as a valuation ratio and a term spread are meant to.
const instrumentNormal = normalStream(rng(20250512));
const boardYield: number[] = [];
const termSpread: number[] = [];
let yieldGap = 0.004;
let spreadGap = -0.002;
for (let t = 0; t <= T; t++) {
  const nextHarbor = t < T ? factors[t + 1][0] - factorMean[0] : 0;
  const nextEmber = t < T ? factors[t + 1][1] - factorMean[1] : 0;
  yieldGap = 0.97 * yieldGap + 0.0012 * instrumentNormal() + 0.03 * nextHarbor;
  spreadGap = 0.9 * spreadGap + 0.0011 * instrumentNormal() + 0.012 * nextEmber;
  boardYield.push(round(0.035 + yieldGap, 6));
  termSpread.push(round(0.012 + spreadGap, 6));
}
const instrumentRows = ['date,board_yield,term_spread'];
for (let t = 0; t <= T; t++) instrumentRows.push(`${dates[t]},${boardYield[t].toFixed(6)},${termSpread[t].toFixed(6)}`);

const write = (file: string, lines: string[]) => writeFileSync(path.join(here, file), lines.join('\n') + '\n');
write('monthly/prices.csv', priceRows);
write('monthly/factors.csv', factorRows);
write('monthly/bill_yield.csv', yieldRows);
write('monthly/mm_account.csv', accountRows);
write('monthly/consumption.csv', consumptionRows);
write('monthly/instruments.csv', instrumentRows);
write('daily/prices_wide.csv', dailyPrice);
write('daily/dividends_wide.csv', dailyDiv);
write('daily/overnight_account.csv', dailyAccount);
write(
  'monthly/design.csv',
  ['asset,payout,beta_harbor_ember_ledger,alpha,idiosyncratic_sd', ...table.map((r) => `${r.asset},${r.values.join(',')}`)],
);
process.stdout.write(`wrote ${priceRows.length - 1} monthly price rows (${companies.length} assets x ${dates.length} dates), ${days.length * ferries.length} daily cells\n`);

// ---------------------------------------------------------------- returns scenario (its own seeded stream)
// The Corvane board's research desk publishes twelve portfolios as returns, not prices:
// quay size (small, mid, large) by beacon tilt (t1 low ... t4 high), monthly 1990-01 to
// 2024-12, YYYYMM dates, percent, -99.99 where a portfolio had no return (large-t4 held
// no company before 1990-07; small-t1 was suspended in 1998-08 and 1998-09). Three traded
// factors (excess returns) and the per-month bill rate come in the same layout.
{
  const draw = rng(20261202);
  let spareR: number | null = null;
  const gauss = (): number => {
    if (spareR !== null) {
      const s = spareR;
      spareR = null;
      return s;
    }
    let u = 0;
    while (u === 0) u = draw();
    const v = draw();
    const r = Math.sqrt(-2 * Math.log(u));
    spareR = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
  const span = (lo: number, hi: number) => lo + (hi - lo) * draw();
  const months: string[] = [];
  for (let yy = 1990; yy <= 2024; yy++) for (let mm = 1; mm <= 12; mm++) months.push(`${yy}${mm < 10 ? '0' : ''}${mm}`);
  // per-month bill rate (percent), mean-reverting around 0.25 % a month
  const bill: number[] = [];
  let level = 0.42;
  for (let t = 0; t < months.length; t++) {
    level = Math.max(0.0, level + 0.03 * (0.25 - level) + 0.02 * gauss());
    bill.push(Number(level.toFixed(4)));
  }
  // three factors (monthly excess returns, percent): the broad tideline, keel (small minus large), beacon (high minus low tilt)
  const fNames = ['tideline', 'keel', 'beacon'] as const;
  const fMean = [0.6, 0.2, 0.3];
  const fMix = [
    [4.3, 0, 0],
    [0.8, 2.6, 0],
    [-0.5, 0.3, 2.4],
  ];
  const fac = months.map(() => {
    const z = [gauss(), gauss(), gauss()];
    return fMean.map((mu, k) => Number((mu + fMix[k][0] * z[0] + fMix[k][1] * z[1] + fMix[k][2] * z[2]).toFixed(2)));
  });
  const sizes = ['small', 'mid', 'large'] as const;
  const ports: { name: string; beta: number[]; alpha: number; sd: number }[] = [];
  sizes.forEach((sz, i) => {
    for (let tilt = 1; tilt <= 4; tilt++) {
      ports.push({
        name: `${sz}-t${tilt}`,
        beta: [span(0.85, 1.2), 0.9 - 0.7 * i + span(-0.1, 0.1), -0.6 + 0.4 * tilt + span(-0.1, 0.1)],
        alpha: 0.05 * gauss(),
        sd: span(1.2, 2.6) - 0.3 * i,
      });
    }
  });
  const missing = (p: string, m: string) => (p === 'large-t4' && m < '199007') || (p === 'small-t1' && (m === '199808' || m === '199809'));
  const portRows = ['date,' + ports.map((p) => p.name).join(',')];
  months.forEach((m, t) => {
    const cells = ports.map((p) => {
      const excess = p.alpha + p.beta[0] * fac[t][0] + p.beta[1] * fac[t][1] + p.beta[2] * fac[t][2] + p.sd * gauss();
      return missing(p.name, m) ? '-99.99' : (bill[t] + excess).toFixed(2);
    });
    portRows.push(`${m},${cells.join(',')}`);
  });
  const facRows = ['date,' + fNames.join(','), ...months.map((m, t) => `${m},${fac[t].map((v) => v.toFixed(2)).join(',')}`)];
  const billRows = ['date,bill_rate', ...months.map((m, t) => `${m},${bill[t].toFixed(4)}`)];
  mkdirSync(path.join(here, 'returns'), { recursive: true });
  write('returns/portfolios.csv', portRows);
  write('returns/factors.csv', facRows);
  write('returns/bill_rate.csv', billRows);
  process.stdout.write(`wrote ${ports.length} return portfolios x ${months.length} months, ${fNames.length} factors, the bill rate\n`);
}
