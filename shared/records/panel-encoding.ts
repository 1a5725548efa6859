/**
 * Canonical byte encoding of a returns panel, and its SHA-256 fingerprint.
 *
 * The fingerprint identifies the exact numbers an estimate used: two panels have the
 * same fingerprint iff they have the same frequency, return kind, period labels, asset
 * and factor names (in order) and the same float64 values bit for bit. Layout
 * (documented in docs/methods.md, "Run records"), all integers unsigned 32-bit
 * little-endian, all strings UTF-8 prefixed by their byte length as u32:
 *
 *   "DFLP"                  4 ASCII bytes (magic)
 *   u32 encoding version    (PANEL_ENCODING_VERSION)
 *   string frequency, string returnKind
 *   u32 T, u32 N, u32 K
 *   u8 flags                bit 0: riskfreeGross present; bit 1: consumptionGrowth present;
 *                           bit 2: priceRatios present (drift splits);
 *                           bit 3: instruments present (at least one series)
 *   T strings               period labels
 *   N strings               asset names
 *   K strings               factor names
 *   float64 LE values       asset 0 periods 0..T-1, asset 1 ..., then factor 0 ... factor K-1,
 *                           then riskfreeGross (T) if present, then consumptionGrowth (T) if present,
 *                           then, if priceRatios are present, per asset a u8 (1: ratios follow, T
 *                           float64; 0: none, an asset stored as returns).
 *   instruments (bit 3)     u32 lag, u32 J, J strings (names), then float64 LE values: instrument
 *                           0 periods 0..T-1 (the value dated lag periods before each), ... J-1.
 * A panel without price ratios or instruments encodes exactly as before they existed.
 *
 * Yearly values of a present-value decomposition are encoded by `encodeYearly` (magic "DFLY",
 * same version): u32 T, u32 N, the years' close labels (T strings), the asset names (N
 * strings), a string for the weighting, then price (T float64) and dividend (T float64).
 *
 * Every NaN is written as the one quiet NaN 0x7FF8000000000000 (payloads carry no data);
 * -0 keeps its sign bit. sampleNotes are descriptive text, not data, and are left out.
 */
import type { ReturnsPanel } from '../panel.js';
import type { PanelFingerprint } from './run-record.js';
import { DeflatorError } from '../errors.js';
import { Sha256, toHex } from './sha256.js';
import { utf8Encode } from './utf8.js';

export const PANEL_ENCODING_VERSION = 1;

const LITTLE_ENDIAN = new Uint8Array(Float64Array.of(1).buffer)[7] === 0x3f;

/** Appends to a growable byte buffer. */
class ByteWriter {
  private buf = new Uint8Array(1024);
  private view = new DataView(this.buf.buffer);
  private n = 0;

  private reserve(extra: number): void {
    if (this.n + extra <= this.buf.length) return;
    let size = this.buf.length * 2;
    while (size < this.n + extra) size *= 2;
    const next = new Uint8Array(size);
    next.set(this.buf.subarray(0, this.n));
    this.buf = next;
    this.view = new DataView(next.buffer);
  }
  u8(x: number): void {
    this.reserve(1);
    this.buf[this.n++] = x;
  }
  u32(x: number): void {
    this.reserve(4);
    this.view.setUint32(this.n, x, true);
    this.n += 4;
  }
  bytes(b: Uint8Array): void {
    this.reserve(b.length);
    this.buf.set(b, this.n);
    this.n += b.length;
  }
  str(s: string): void {
    const b = utf8Encode(s);
    this.u32(b.length);
    this.bytes(b);
  }
  /**
   * A whole float64 series: its bytes copied at once, then each NaN overwritten with the one
   * quiet NaN as f64 writes it, on a little-endian machine; value by value elsewhere.
   */
  f64s(xs: Float64Array): void {
    if (!LITTLE_ENDIAN) {
      for (let i = 0; i < xs.length; i++) this.f64(xs[i]);
      return;
    }
    const at = this.n;
    this.bytes(new Uint8Array(xs.buffer, xs.byteOffset, xs.byteLength));
    for (let i = 0; i < xs.length; i++) {
      if (!Number.isNaN(xs[i])) continue;
      this.view.setUint32(at + i * 8, 0, true);
      this.view.setUint32(at + i * 8 + 4, 0x7ff80000, true);
    }
  }
  f64(x: number): void {
    this.reserve(8);
    if (Number.isNaN(x)) {
      this.view.setUint32(this.n, 0, true);
      this.view.setUint32(this.n + 4, 0x7ff80000, true);
    } else this.view.setFloat64(this.n, x, true);
    this.n += 8;
  }
  result(): Uint8Array {
    return this.buf.slice(0, this.n);
  }
}

function checkLength(what: string, got: number, T: number): void {
  if (got !== T) {
    throw new DeflatorError(
      'INPUT_INVALID',
      `panel ${what} has ${got} values but the panel has ${T} periods`,
      'rebuild the panel from the store; every series of a panel is aligned on its periods',
    );
  }
}

/** The canonical bytes of a panel (layout above). */
export function encodePanel(panel: ReturnsPanel): Uint8Array {
  const T = panel.periods.length;
  const N = panel.assets.length;
  const K = panel.factors.length;
  if (panel.returns.length !== N) {
    throw new DeflatorError('INPUT_INVALID', `panel has ${N} asset names but ${panel.returns.length} return series`, 'rebuild the panel from the store');
  }
  const w = new ByteWriter();
  w.bytes(Uint8Array.from([0x44, 0x46, 0x4c, 0x50]));
  w.u32(PANEL_ENCODING_VERSION);
  w.str(panel.frequency);
  w.str(panel.returnKind);
  w.u32(T);
  w.u32(N);
  w.u32(K);
  const instruments = panel.instruments && panel.instruments.series.length > 0 ? panel.instruments : undefined;
  w.u8((panel.riskfreeGross ? 1 : 0) | (panel.consumptionGrowth ? 2 : 0) | (panel.priceRatios ? 4 : 0) | (instruments ? 8 : 0));
  for (const p of panel.periods) w.str(p);
  for (const a of panel.assets) w.str(a);
  for (const f of panel.factors) w.str(f.name);
  panel.returns.forEach((r, i) => {
    checkLength(`asset ${panel.assets[i]}`, r.length, T);
    w.f64s(r);
  });
  for (const f of panel.factors) {
    checkLength(`factor ${f.name}`, f.values.length, T);
    w.f64s(f.values);
  }
  for (const [what, s] of [['riskfreeGross', panel.riskfreeGross], ['consumptionGrowth', panel.consumptionGrowth]] as const) {
    if (!s) continue;
    checkLength(what, s.length, T);
    for (let t = 0; t < T; t++) w.f64(s[t]);
  }
  if (panel.priceRatios) {
    if (panel.priceRatios.length !== N) throw new DeflatorError('INPUT_INVALID', `panel has ${N} assets but ${panel.priceRatios.length} price-ratio entries`, 'rebuild the panel from the store');
    panel.priceRatios.forEach((r, i) => {
      w.u8(r ? 1 : 0);
      if (!r) return;
      checkLength(`price ratios of ${panel.assets[i]}`, r.length, T);
      for (let t = 0; t < T; t++) w.f64(r[t]);
    });
  }
  if (instruments) {
    w.u32(instruments.lag);
    w.u32(instruments.series.length);
    for (const z of instruments.series) w.str(z.name);
    for (const z of instruments.series) {
      checkLength(`instrument ${z.name}`, z.values.length, T);
      for (let t = 0; t < T; t++) w.f64(z.values[t]);
    }
  }
  return w.result();
}

/** The yearly values a present-value decomposition used (shared/returns/yearly.ts). */
export interface YearlyInput {
  closes: string[];
  assets: string[];
  weighting: string;
  price: ArrayLike<number>;
  dividend: ArrayLike<number>;
}

/** Canonical bytes of yearly values (layout in the file comment). */
export function encodeYearly(v: YearlyInput): Uint8Array {
  const T = v.closes.length;
  checkLength('prices', v.price.length, T);
  checkLength('dividends', v.dividend.length, T);
  const w = new ByteWriter();
  w.bytes(Uint8Array.from([0x44, 0x46, 0x4c, 0x59]));
  w.u32(PANEL_ENCODING_VERSION);
  w.u32(T);
  w.u32(v.assets.length);
  for (const c of v.closes) w.str(c);
  for (const a of v.assets) w.str(a);
  w.str(v.weighting);
  for (let t = 0; t < T; t++) w.f64(v.price[t]);
  for (let t = 0; t < T; t++) w.f64(v.dividend[t]);
  return w.result();
}

/** The fingerprint stored with a present-value run (frequency 'annual', K = 0). */
export function fingerprintYearly(v: YearlyInput): PanelFingerprint {
  const T = v.closes.length;
  return {
    sha256: toHex(new Sha256().update(encodeYearly(v)).digest()),
    encoding: PANEL_ENCODING_VERSION,
    frequency: 'annual',
    start: v.closes[0] ?? '',
    end: v.closes[T - 1] ?? '',
    T,
    N: v.assets.length,
    K: 0,
  };
}

/** SHA-256 (hex) of bytes. The host may pass a native one (src-main passes node:crypto's): the same digest, faster. */
export type Sha256Hex = (bytes: Uint8Array) => string;

const jsSha256: Sha256Hex = (bytes) => toHex(new Sha256().update(bytes).digest());

/** SHA-256 (hex) of the canonical encoding: the panel fingerprint stored with every run. */
export function panelFingerprint(panel: ReturnsPanel, sha256: Sha256Hex = jsSha256): string {
  return sha256(encodePanel(panel));
}

/** The fingerprint stored with a run: the digest plus the panel's shape. */
export function fingerprintPanel(panel: ReturnsPanel, sha256: Sha256Hex = jsSha256): PanelFingerprint {
  const T = panel.periods.length;
  return {
    sha256: panelFingerprint(panel, sha256),
    encoding: PANEL_ENCODING_VERSION,
    frequency: panel.frequency,
    start: panel.periods[0] ?? '',
    end: panel.periods[T - 1] ?? '',
    T,
    N: panel.assets.length,
    K: panel.factors.length,
  };
}
