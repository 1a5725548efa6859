import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import type { ReturnsPanel } from '../../../shared/panel.js';
import { encodePanel, panelFingerprint, PANEL_ENCODING_VERSION } from '../../../shared/records/panel-encoding.js';

function panel(): ReturnsPanel {
  return {
    frequency: 'monthly',
    periods: ['2030-01-31', '2030-02-28', '2030-03-31'],
    assets: ['North', 'Süd'],
    returnKind: 'excess',
    returns: [Float64Array.from([0.01, -0.02, 0.003]), Float64Array.from([0.5, -0, 1e-300])],
    factors: [{ name: 'MKT', values: Float64Array.from([0.1, 0.2, 0.3]) }],
    riskfreeGross: Float64Array.from([1.001, 1.002, 1.003]),
    sampleNotes: [{ subject: '*', reason: 'not part of the fingerprint' }],
  };
}

/** An independent encoder written with Node's Buffer API straight from the layout in docs/methods.md. */
function referenceEncode(p: ReturnsPanel): Buffer {
  const parts: Buffer[] = [Buffer.from('DFLP', 'ascii')];
  const u32 = (x: number) => {
    const b = Buffer.alloc(4);
    b.writeUInt32LE(x);
    parts.push(b);
  };
  const str = (s: string) => {
    const b = Buffer.from(s, 'utf8');
    u32(b.length);
    parts.push(b);
  };
  const f64 = (x: number) => {
    const b = Buffer.alloc(8);
    b.writeDoubleLE(Number.isNaN(x) ? NaN : x);
    parts.push(b);
  };
  u32(1);
  str(p.frequency);
  str(p.returnKind);
  u32(p.periods.length);
  u32(p.assets.length);
  u32(p.factors.length);
  parts.push(Buffer.from([(p.riskfreeGross ? 1 : 0) | (p.consumptionGrowth ? 2 : 0)]));
  p.periods.forEach(str);
  p.assets.forEach(str);
  p.factors.forEach((f) => str(f.name));
  p.returns.forEach((r) => r.forEach(f64));
  p.factors.forEach((f) => f.values.forEach(f64));
  p.riskfreeGross?.forEach(f64);
  p.consumptionGrowth?.forEach(f64);
  return Buffer.concat(parts);
}

describe('canonical panel encoding', () => {
  it('is the documented layout, byte for byte (independent Buffer encoder)', () => {
    expect(PANEL_ENCODING_VERSION).toBe(1);
    const ours = Buffer.from(encodePanel(panel()));
    expect(ours.equals(referenceEncode(panel()))).toBe(true);
    // Reference: node:crypto SHA-256 over the independent encoding.
    expect(panelFingerprint(panel())).toBe(createHash('sha256').update(referenceEncode(panel())).digest('hex'));
  });

  it('changes with any value bit, name, order or the sign of zero', () => {
    const base = panelFingerprint(panel());
    const variants: ((p: ReturnsPanel) => void)[] = [
      (p) => { p.returns[0][1] = -0.020000000000000004; },
      (p) => { p.returns[1][1] = 0; },
      (p) => { p.assets[1] = 'Sud'; },
      (p) => { p.periods[2] = '2030-03-30'; },
      (p) => { p.factors[0].name = 'MKT2'; },
      (p) => { p.returns.reverse(); p.assets.reverse(); },
      (p) => { delete p.riskfreeGross; },
      (p) => { p.consumptionGrowth = Float64Array.from([1, 1, 1]); },
      (p) => { p.frequency = 'quarterly'; },
      (p) => { p.returnKind = 'gross'; },
    ];
    const seen = new Set([base]);
    for (const change of variants) {
      const p = panel();
      change(p);
      const fp = panelFingerprint(p);
      expect(seen.has(fp), `variant ${change.toString()}`).toBe(false);
      seen.add(fp);
    }
    // Sample notes are descriptive and do not enter the fingerprint.
    const p = panel();
    p.sampleNotes = [];
    expect(panelFingerprint(p)).toBe(base);
  });

  it('writes every NaN as the one quiet NaN', () => {
    const a = panel();
    const b = panel();
    const buf = new DataView(new ArrayBuffer(8));
    buf.setUint32(0, 1, true);
    buf.setUint32(4, 0x7ff00000, true); // a signalling NaN payload
    a.returns[0][0] = NaN;
    b.returns[0][0] = buf.getFloat64(0, true);
    expect(Number.isNaN(b.returns[0][0])).toBe(true);
    expect(panelFingerprint(a)).toBe(panelFingerprint(b));
  });

  it('refuses a ragged panel', () => {
    const p = panel();
    p.factors[0].values = Float64Array.from([1, 2]);
    expect(() => encodePanel(p)).toThrow(/factor MKT has 2 values but the panel has 3 periods/);
  });
});
