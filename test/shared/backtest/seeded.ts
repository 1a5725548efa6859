import type { ReturnsPanel } from '../../../shared/panel.js';

/** A small deterministic generator for seeded test panels (values checked against references elsewhere, never hard-coded). */
export function seededPanel(T: number, N: number, K: number, seed = 1): ReturnsPanel {
  let s = seed >>> 0;
  const unif = (): number => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return (s + 0.5) / 4294967296;
  };
  const normal = (): number => Math.sqrt(-2 * Math.log(unif())) * Math.cos(2 * Math.PI * unif());
  const factors = Array.from({ length: K }, (_, k) => ({ name: `f${k + 1}`, values: new Float64Array(T) }));
  for (const f of factors) {
    let prev = 0;
    for (let t = 0; t < T; t++) {
      prev = 0.1 * prev + 0.005 + 0.04 * normal();
      f.values[t] = prev;
    }
  }
  const returns = Array.from({ length: N }, (_, i) => {
    const r = new Float64Array(T);
    const beta = factors.map((_, k) => 0.5 + ((i * 7 + k * 3) % 10) / 10);
    for (let t = 0; t < T; t++) {
      let v = 0.001 * ((i % 5) - 2) + 0.02 * normal();
      for (let k = 0; k < K; k++) v += beta[k] * factors[k].values[t];
      r[t] = v;
    }
    return r;
  });
  const periods = Array.from({ length: T }, (_, t) => {
    const y = 1990 + Math.floor(t / 12);
    const m = (t % 12) + 1;
    return `${y}-${m < 10 ? '0' : ''}${m}-28`;
  });
  return { frequency: 'monthly', periods, assets: Array.from({ length: N }, (_, i) => `p${i + 1}`), returnKind: 'excess', returns, factors, sampleNotes: [] };
}
