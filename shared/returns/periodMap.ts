/**
 * A Map from period index to a value, stored densely: the period indices of one history
 * are a contiguous-ish run of integers (trading days 0..P-1, months year*12+m), so an
 * array over [lo, hi) with a presence flag replaces a hash table. For a daily panel of a
 * million rows this is the difference between five million hash-table insertions (and
 * the garbage they leave) and array writes.
 *
 * It is a Map (it extends Map and overrides every method), so every consumer of
 * AssetPeriods keeps its code; iteration is in ascending index, which is the insertion
 * order where it is used (a history's rows are ascending, so are their periods).
 */
export class PeriodMap<V> extends Map<number, V> {
  private lo = 0;
  private vals: V[] = [];
  private has_: Uint8Array = new Uint8Array(0);
  private count = 0;
  /**
   * A run (see `run`): every index of [lo, lo + count) is held, its values at 0.. of
   * `vals` (another's array, read only here) or of what `produce` makes on first use; no
   * flags. The first change makes the map an ordinary one with its own copy.
   */
  private full = false;
  private produce: (() => ArrayLike<V>) | null = null;

  /** `lo`, `capacity`: the first period index and how many follow, when known (saves growing). */
  constructor(lo?: number, capacity?: number) {
    super();
    if (lo !== undefined && capacity !== undefined && Number.isInteger(lo) && capacity > 0) {
      this.lo = lo;
      this.has_ = new Uint8Array(capacity);
      this.vals = this.storage(capacity);
    }
  }

  /**
   * Makes this map hold periods lo..lo+n-1 with the values `values[0..n-1]`, without copying
   * them: `values` is an array the caller never changes afterwards (or a function making it,
   * called once, on the first read of a value). This map never writes to it.
   */
  protected initRun(lo: number, n: number, values: ArrayLike<V> | (() => ArrayLike<V>)): this {
    if (!Number.isInteger(lo) || !(n > 0)) throw new RangeError(`PeriodMap: a run needs an integer start and a positive length (${lo}, ${n})`);
    this.lo = lo;
    this.count = n;
    this.has_ = new Uint8Array(0);
    this.full = true;
    if (typeof values === 'function') {
      this.produce = values;
      this.vals = [];
    } else {
      this.produce = null;
      this.vals = values as V[];
    }
    return this;
  }

  /** A map holding periods lo..lo+values.length-1 (see initRun; n > 0). */
  static run<V>(lo: number, n: number, values: ArrayLike<V> | (() => ArrayLike<V>)): PeriodMap<V> {
    return new PeriodMap<V>().initRun(lo, n, values);
  }

  /** The values of a run (made on first use). */
  private runValues(): V[] {
    if (this.produce) {
      const made = this.produce();
      this.produce = null;
      if (made.length < this.count) throw new RangeError(`PeriodMap: a run of ${this.count} periods was given ${made.length} values`);
      this.vals = made as V[];
    }
    return this.vals;
  }

  /** A run turned into an ordinary map with its own copy of the values (before any change). */
  private unrun(): void {
    if (!this.full) return;
    const src = this.runValues();
    const n = this.count;
    const vals = this.storage(n);
    for (let i = 0; i < n; i++) vals[i] = src[i];
    this.has_ = new Uint8Array(n).fill(1);
    this.vals = vals;
    this.full = false;
  }

  /** Is this a run whose values are given (not yet to be made)? */
  isRun(): boolean {
    return this.full && this.produce === null;
  }

  /** Is this the same run of the same values as `other` (so that reading one says what the other holds)? */
  sameRun(other: PeriodMap<V>): boolean {
    return this.full && other.full && this.lo === other.lo && this.count === other.count && this.produce === null && other.produce === null && this.vals === other.vals;
  }

  /** Room for `n` values (NumberPeriodMap keeps them in a Float64Array). */
  protected storage(n: number): V[] {
    return new Array<V>(n);
  }

  private slot(k: number): number {
    return k - this.lo;
  }

  private growTo(k: number): void {
    if (this.has_.length === 0) {
      this.lo = k;
      this.has_ = new Uint8Array(64);
      this.vals = this.storage(64);
      return;
    }
    if (k < this.lo) {
      const shift = Math.max(this.lo - k, this.has_.length);
      const flags = new Uint8Array(this.has_.length + shift);
      flags.set(this.has_, shift);
      const vals = this.storage(this.has_.length + shift);
      for (let i = 0; i < this.has_.length; i++) if (this.has_[i]) vals[i + shift] = this.vals[i];
      this.has_ = flags;
      this.vals = vals;
      this.lo -= shift;
      return;
    }
    let size = this.has_.length;
    while (k - this.lo >= size) size *= 2;
    const flags = new Uint8Array(size);
    flags.set(this.has_);
    const vals = this.storage(size);
    for (let i = 0; i < this.has_.length; i++) if (this.has_[i]) vals[i] = this.vals[i];
    this.has_ = flags;
    this.vals = vals;
  }

  override set(k: number, v: V): this {
    if (!Number.isInteger(k)) throw new RangeError(`PeriodMap: period index ${k} is not an integer`);
    if (this.full) this.unrun();
    if (this.has_.length === 0 || k < this.lo || k - this.lo >= this.has_.length) this.growTo(k);
    const i = this.slot(k);
    if (!this.has_[i]) {
      this.has_[i] = 1;
      this.count++;
    }
    this.vals[i] = v;
    return this;
  }

  override get(k: number): V | undefined {
    const i = this.slot(k);
    if (this.full) return i >= 0 && i < this.count ? this.runValues()[i] : undefined;
    return i >= 0 && i < this.has_.length && this.has_[i] ? this.vals[i] : undefined;
  }

  override has(k: number): boolean {
    const i = this.slot(k);
    if (this.full) return i >= 0 && i < this.count;
    return i >= 0 && i < this.has_.length && this.has_[i] === 1;
  }

  override delete(k: number): boolean {
    if (!this.has(k)) return false;
    this.unrun();
    const i = this.slot(k);
    this.has_[i] = 0;
    if (Array.isArray(this.vals)) this.vals[i] = undefined as V;
    this.count--;
    return true;
  }

  override clear(): void {
    this.full = false;
    this.produce = null;
    this.has_ = new Uint8Array(0);
    this.vals = this.storage(0);
    this.count = 0;
  }

  override get size(): number {
    return this.count;
  }

  /** The smallest and largest index held ([+inf, -inf] when empty), without iterating. */
  extent(): [number, number] {
    if (this.full) return [this.lo, this.lo + this.count - 1];
    let a = 0;
    while (a < this.has_.length && !this.has_[a]) a++;
    let b = this.has_.length - 1;
    while (b >= 0 && !this.has_[b]) b--;
    return a <= b ? [a + this.lo, b + this.lo] : [Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY];
  }

  /** How many of the periods lo..hi the map does not hold, and the first of them (-1 when none). */
  missingIn(lo: number, hi: number): { missing: number; first: number } {
    let missing = 0;
    let first = -1;
    if (this.full) {
      // held: [this.lo, this.lo + count - 1]
      const a = Math.max(lo, this.lo);
      const b = Math.min(hi, this.lo + this.count - 1);
      const held = b >= a ? b - a + 1 : 0;
      missing = Math.max(0, hi - lo + 1) - held;
      if (missing > 0) first = lo < this.lo || held === 0 ? lo : b + 1;
      return { missing, first };
    }
    for (let k = lo; k <= hi; k++) {
      const i = k - this.lo;
      if (!(i >= 0 && i < this.has_.length && this.has_[i] === 1)) {
        if (missing === 0) first = k;
        missing += 1;
      }
    }
    return { missing, first };
  }

  /**
   * The values of periods from..from+out.length-1 written into `out`, when the map holds
   * every one of them (true); false, with `out` as it may be, when one is missing.
   */
  rangeInto(from: number, out: { [i: number]: V; length: number }): boolean {
    const a = from - this.lo;
    const n = out.length;
    const vals: unknown = this.full ? this.runValues() : this.vals;
    if (this.full) {
      if (a < 0 || a + n > this.count) return n === 0;
    } else {
      if (a < 0 || a + n > this.has_.length) return n === 0;
      for (let i = 0; i < n; i++) if (!this.has_[a + i]) return false;
    }
    if (out instanceof Float64Array && vals instanceof Float64Array) out.set(vals.subarray(a, a + n));
    else for (let i = 0; i < n; i++) out[i] = (vals as V[])[a + i];
    return true;
  }

  override *entries(): MapIterator<[number, V]> {
    if (this.full) {
      const vals = this.runValues();
      for (let i = 0; i < this.count; i++) yield [i + this.lo, vals[i]];
      return;
    }
    for (let i = 0; i < this.has_.length; i++) if (this.has_[i]) yield [i + this.lo, this.vals[i]];
  }

  override *keys(): MapIterator<number> {
    if (this.full) {
      for (let i = 0; i < this.count; i++) yield i + this.lo;
      return;
    }
    for (let i = 0; i < this.has_.length; i++) if (this.has_[i]) yield i + this.lo;
  }

  override *values(): MapIterator<V> {
    if (this.full) {
      const vals = this.runValues();
      for (let i = 0; i < this.count; i++) yield vals[i];
      return;
    }
    for (let i = 0; i < this.has_.length; i++) if (this.has_[i]) yield this.vals[i];
  }

  override [Symbol.iterator](): MapIterator<[number, V]> {
    return this.entries();
  }

  override forEach(fn: (value: V, key: number, map: Map<number, V>) => void, thisArg?: unknown): void {
    if (this.full) {
      const vals = this.runValues();
      for (let i = 0; i < this.count; i++) fn.call(thisArg, vals[i], i + this.lo, this);
      return;
    }
    for (let i = 0; i < this.has_.length; i++) if (this.has_[i]) fn.call(thisArg, this.vals[i], i + this.lo, this);
  }
}

/**
 * A PeriodMap of numbers held in a Float64Array: a daily history's maps are then memory
 * outside the JavaScript heap, which the garbage collector does not copy from generation
 * to generation (a million-row panel holds several million of these values at once).
 * Values are stored as the float64 they are, so what `get` returns is bit for bit what
 * `set` was given.
 */
export class NumberPeriodMap extends PeriodMap<number> {
  protected override storage(n: number): number[] {
    return new Float64Array(n) as unknown as number[];
  }

  /** A number map holding periods lo..lo+n-1 with the values `values[0..n-1]` (PeriodMap.run). */
  static numberRun(lo: number, n: number, values: Float64Array | (() => Float64Array)): NumberPeriodMap {
    return new NumberPeriodMap().initRun(lo, n, values);
  }
}
