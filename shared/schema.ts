/**
 * Schemas of JSON input: the run specs (shared/spec.ts), grid specs, portfolio sorts and the
 * bridge's requests are declared with these, checked, given their defaults and typed by them.
 *
 *   const lags = s.union([s.number().int().min(0), s.literal('auto')]).default('auto');
 *   const r = schema.safeParse(json);   // { success: true, data } | { success: false, error }
 *   type Spec = Infer<typeof schema>;    // the parsed value's type; Input<...> what may be given
 *
 * Every problem is an issue with the path of the value it concerns and a message in the
 * project's words ("expected one of "first", "second", got "fourth""); a strict object names
 * the keys it does not know (code 'unknown_keys'). All problems of a value are reported, not
 * only the first. Parsing returns new objects and arrays (defaults are copied, so changing a
 * parsed spec never changes a schema's default). Small on purpose: a command's start builds
 * every schema it uses, so building one is a few plain objects.
 */

export type Path = (string | number)[];

export interface Issue {
  /** 'unknown_keys': a strict object met keys it does not know (listed in `keys`). */
  code: 'invalid' | 'unknown_keys';
  path: Path;
  message: string;
  keys?: string[];
}

export class SchemaError extends Error {
  constructor(readonly issues: Issue[]) {
    super(issues.map((i) => `${i.path.length ? `${i.path.join('.')}: ` : ''}${i.message}`).join('\n'));
    this.name = 'SchemaError';
  }
}

export type ParseResult<T> = { success: true; data: T } | { success: false; error: SchemaError };

/** A value this schema could not accept (parsing goes on to report every problem). */
const BAD: unique symbol = Symbol('bad');
type Bad = typeof BAD;

/** How a value reads in a message: strings quoted (and cut), the kind of anything else. */
function shown(v: unknown): string {
  if (v === undefined) return 'nothing';
  if (v === null) return 'null';
  if (typeof v === 'string') return JSON.stringify(v.length > 60 ? `${v.slice(0, 57)}...` : v);
  if (typeof v === 'number' || typeof v === 'boolean') return String(v);
  if (Array.isArray(v)) return v.length ? 'a list' : 'an empty list';
  if (typeof v === 'object') return 'an object';
  return `a ${typeof v}`;
}

export abstract class Schema<Out, In = Out> {
  /** Type-level only: the parsed value and the accepted input. */
  declare readonly _out: Out;
  declare readonly _in: In;

  /** What this schema accepts, for messages: "a whole number from 1 to 10000". */
  abstract describe(): string;

  /** The parsed value, or BAD after pushing the problems found to `issues`. */
  abstract run(value: unknown, path: Path, issues: Issue[]): Out | Bad;

  /** Only the type of value, for unions: does `value` look like what this schema takes? */
  kindMatches(value: unknown): boolean {
    return value !== undefined;
  }

  optional(): Optional<Out, In> {
    return new Optional<Out, In>(this);
  }

  default(value: Exclude<Out, undefined>): Defaulted<Exclude<Out, undefined>, In> {
    return new Defaulted<Exclude<Out, undefined>, In>(this as unknown as Schema<Exclude<Out, undefined>, In>, value);
  }

  safeParse(value: unknown): ParseResult<Out> {
    const issues: Issue[] = [];
    const out = this.run(value, [], issues);
    if (out === BAD || issues.length) return { success: false, error: new SchemaError(issues.length ? issues : [{ code: 'invalid', path: [], message: `expected ${this.describe()}` }]) };
    return { success: true, data: out };
  }

  parse(value: unknown): Out {
    const r = this.safeParse(value);
    if (!r.success) throw r.error;
    return r.data;
  }

  /** A value of the wrong kind, or none where one is needed. */
  protected wrongKind(path: Path, issues: Issue[], value: unknown): Bad {
    return this.fail(path, issues, value === undefined ? `missing: expected ${this.describe()}` : `expected ${this.describe()}, got ${shown(value)}`);
  }

  protected fail(path: Path, issues: Issue[], message: string): Bad {
    issues.push({ code: 'invalid', path: [...path], message });
    return BAD;
  }
}

export type AnySchema = Schema<unknown, unknown>;
/** The parsed value of a schema. */
export type Infer<S extends AnySchema> = S['_out'];
/** What a schema accepts (keys with defaults may be left out). */
export type Input<S extends AnySchema> = S['_in'];

class Optional<Out, In> extends Schema<Out | undefined, In | undefined> {
  constructor(readonly inner: Schema<Out, In>) {
    super();
  }
  describe(): string {
    return this.inner.describe();
  }
  override kindMatches(value: unknown): boolean {
    return value === undefined || this.inner.kindMatches(value);
  }
  run(value: unknown, path: Path, issues: Issue[]): Out | undefined | Bad {
    return value === undefined ? undefined : this.inner.run(value, path, issues);
  }
  unwrap(): Schema<Out, In> {
    return this.inner;
  }
}

/** A copy of a default that holds arrays or objects, so no parse shares them. */
function copied<T>(v: T): T {
  return v !== null && typeof v === 'object' ? (JSON.parse(JSON.stringify(v)) as T) : v;
}

class Defaulted<Out, In> extends Schema<Out, In | undefined> {
  constructor(
    readonly inner: Schema<Out, In>,
    readonly fallback: Out,
  ) {
    super();
  }
  describe(): string {
    return this.inner.describe();
  }
  override kindMatches(value: unknown): boolean {
    return value === undefined || this.inner.kindMatches(value);
  }
  run(value: unknown, path: Path, issues: Issue[]): Out | Bad {
    return value === undefined ? copied(this.fallback) : this.inner.run(value, path, issues);
  }
  unwrap(): Schema<Out, In> {
    return this.inner;
  }
}

class StringSchema extends Schema<string> {
  private checks: { test: (v: string) => boolean; message: string }[] = [];
  private minLen = 0;
  private maxLen = Infinity;
  describe(): string {
    return this.minLen > 0 ? 'a non-empty string' : 'a string';
  }
  override kindMatches(value: unknown): boolean {
    return typeof value === 'string';
  }
  private with(f: (c: StringSchema) => void): StringSchema {
    const c = new StringSchema();
    c.checks = [...this.checks];
    c.minLen = this.minLen;
    c.maxLen = this.maxLen;
    f(c);
    return c;
  }
  min(n: number): StringSchema {
    return this.with((c) => {
      c.minLen = n;
      c.checks.push({ test: (v) => v.length >= n, message: n === 1 ? 'expected a non-empty string' : `expected at least ${n} characters` });
    });
  }
  max(n: number): StringSchema {
    return this.with((c) => {
      c.maxLen = n;
      c.checks.push({ test: (v) => v.length <= n, message: `expected at most ${n} characters` });
    });
  }
  regex(pattern: RegExp, message = `expected text of the form ${String(pattern)}`): StringSchema {
    return this.with((c) => c.checks.push({ test: (v) => pattern.test(v), message }));
  }
  refine(test: (v: string) => boolean, message: string): StringSchema {
    return this.with((c) => c.checks.push({ test, message }));
  }
  run(value: unknown, path: Path, issues: Issue[]): string | Bad {
    if (typeof value !== 'string') return this.wrongKind(path, issues, value);
    let ok = true;
    for (const c of this.checks) {
      if (!c.test(value)) {
        this.fail(path, issues, c.message);
        ok = false;
        break;
      }
    }
    return ok ? value : BAD;
  }
}

class NumberSchema extends Schema<number> {
  private whole = false;
  private lo = -Infinity;
  private hi = Infinity;
  private above: number | undefined;
  private with(f: (c: NumberSchema) => void): NumberSchema {
    const c = new NumberSchema();
    c.whole = this.whole;
    c.lo = this.lo;
    c.hi = this.hi;
    c.above = this.above;
    f(c);
    return c;
  }
  int(): NumberSchema {
    return this.with((c) => (c.whole = true));
  }
  min(n: number): NumberSchema {
    return this.with((c) => (c.lo = n));
  }
  max(n: number): NumberSchema {
    return this.with((c) => (c.hi = n));
  }
  positive(): NumberSchema {
    return this.with((c) => (c.above = 0));
  }
  /** Finite numbers only: always so here (JSON has no infinities; a NaN or infinity given in code is refused). */
  finite(): NumberSchema {
    return this;
  }
  describe(): string {
    const kind = this.whole ? 'whole number' : 'number';
    if (this.above !== undefined && this.above === 0 && this.hi === Infinity) return `a positive ${kind}`;
    if (this.lo > -Infinity && this.hi < Infinity) return `a ${kind} from ${this.lo} to ${this.hi}`;
    if (this.lo > -Infinity) return `a ${kind} of at least ${this.lo}`;
    if (this.hi < Infinity) return `a ${kind} of at most ${this.hi}`;
    return `a ${kind}`;
  }
  override kindMatches(value: unknown): boolean {
    return typeof value === 'number';
  }
  run(value: unknown, path: Path, issues: Issue[]): number | Bad {
    if (typeof value !== 'number' || !Number.isFinite(value)) return this.wrongKind(path, issues, value);
    const ok = (!this.whole || Number.isInteger(value)) && value >= this.lo && value <= this.hi && (this.above === undefined || value > this.above);
    return ok ? value : this.fail(path, issues, `expected ${this.describe()}, got ${value}`);
  }
}

class BooleanSchema extends Schema<boolean> {
  describe(): string {
    return 'true or false';
  }
  override kindMatches(value: unknown): boolean {
    return typeof value === 'boolean';
  }
  run(value: unknown, path: Path, issues: Issue[]): boolean | Bad {
    return typeof value === 'boolean' ? value : this.wrongKind(path, issues, value);
  }
}

class UnknownSchema extends Schema<unknown> {
  describe(): string {
    return 'any value';
  }
  override kindMatches(): boolean {
    return true;
  }
  run(value: unknown): unknown {
    return value;
  }
}

class EnumSchema<T extends string | number | boolean> extends Schema<T> {
  constructor(readonly options: readonly T[]) {
    super();
  }
  describe(): string {
    const list = this.options.map((o) => JSON.stringify(o));
    return list.length === 1 ? list[0] : `one of ${list.join(', ')}`;
  }
  override kindMatches(value: unknown): boolean {
    return this.options.some((o) => typeof o === typeof value);
  }
  run(value: unknown, path: Path, issues: Issue[]): T | Bad {
    return (this.options as readonly unknown[]).includes(value) ? (value as T) : this.wrongKind(path, issues, value);
  }
}

class ArraySchema<T extends AnySchema> extends Schema<Infer<T>[], Input<T>[]> {
  private minItems = 0;
  private maxItems = Infinity;
  constructor(readonly item: T) {
    super();
  }
  private with(f: (c: ArraySchema<T>) => void): ArraySchema<T> {
    const c = new ArraySchema(this.item);
    c.minItems = this.minItems;
    c.maxItems = this.maxItems;
    f(c);
    return c;
  }
  min(n: number): ArraySchema<T> {
    return this.with((c) => (c.minItems = n));
  }
  max(n: number): ArraySchema<T> {
    return this.with((c) => (c.maxItems = n));
  }
  describe(): string {
    return this.minItems > 0 ? 'a non-empty list' : 'a list';
  }
  override kindMatches(value: unknown): boolean {
    return Array.isArray(value);
  }
  run(value: unknown, path: Path, issues: Issue[]): Infer<T>[] | Bad {
    if (!Array.isArray(value)) return this.wrongKind(path, issues, value);
    if (value.length < this.minItems) return this.fail(path, issues, `expected at least ${this.minItems} item${this.minItems === 1 ? '' : 's'}, got ${value.length}`);
    if (value.length > this.maxItems) return this.fail(path, issues, `expected at most ${this.maxItems} items, got ${value.length}`);
    const out: Infer<T>[] = new Array<Infer<T>>(value.length);
    let ok = true;
    for (let i = 0; i < value.length; i++) {
      path.push(i);
      const v = this.item.run(value[i], path, issues);
      path.pop();
      if (v === BAD) ok = false;
      else out[i] = v;
    }
    return ok ? out : BAD;
  }
}

export type Shape = Record<string, AnySchema>;
type Simplify<T> = { [K in keyof T]: T[K] } & {};
type OptionalKeys<T> = { [K in keyof T]-?: undefined extends T[K] ? K : never }[keyof T];
type WithOptionalKeys<T> = Simplify<{ [K in Exclude<keyof T, OptionalKeys<T>>]: T[K] } & { [K in OptionalKeys<T>]?: T[K] }>;
type ShapeOut<S extends Shape> = WithOptionalKeys<{ [K in keyof S]: Infer<S[K]> }>;
type ShapeIn<S extends Shape> = WithOptionalKeys<{ [K in keyof S]: Input<S[K]> }>;

const isPlainObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);

class ObjectSchema<S extends Shape> extends Schema<ShapeOut<S>, ShapeIn<S>> {
  constructor(
    readonly shape: S,
    private readonly closed = false,
  ) {
    super();
  }
  /** Unknown keys are refused (by default they are left out of the parsed value). */
  strict(): ObjectSchema<S> {
    return new ObjectSchema(this.shape, true);
  }
  /** These keys added or replaced; strict as this one. */
  extend<E extends Shape>(more: E): ObjectSchema<Simplify<Omit<S, keyof E> & E>> {
    return new ObjectSchema({ ...this.shape, ...more } as unknown as Simplify<Omit<S, keyof E> & E>, this.closed);
  }
  describe(): string {
    return 'an object';
  }
  override kindMatches(value: unknown): boolean {
    return isPlainObject(value);
  }
  run(value: unknown, path: Path, issues: Issue[]): ShapeOut<S> | Bad {
    if (!isPlainObject(value)) return this.wrongKind(path, issues, value);
    const out: Record<string, unknown> = {};
    let ok = true;
    for (const key of Object.keys(this.shape)) {
      const given = Object.prototype.hasOwnProperty.call(value, key) ? value[key] : undefined;
      path.push(key);
      const v = this.shape[key].run(given, path, issues);
      path.pop();
      if (v === BAD) ok = false;
      else if (v !== undefined) out[key] = v;
    }
    if (this.closed) {
      const unknown = Object.keys(value).filter((k) => !Object.prototype.hasOwnProperty.call(this.shape, k));
      if (unknown.length) {
        issues.push({ code: 'unknown_keys', path: [...path], keys: unknown, message: `unknown key(s) ${unknown.map((k) => JSON.stringify(k)).join(', ')}` });
        ok = false;
      }
    }
    return ok ? (out as ShapeOut<S>) : BAD;
  }
}

type UnionOut<U extends readonly AnySchema[]> = Infer<U[number]>;
type UnionIn<U extends readonly AnySchema[]> = Input<U[number]>;

class UnionSchema<U extends readonly AnySchema[]> extends Schema<UnionOut<U>, UnionIn<U>> {
  constructor(readonly options: U) {
    super();
  }
  describe(): string {
    return this.options.map((o) => o.describe()).join(' or ');
  }
  override kindMatches(value: unknown): boolean {
    return this.options.some((o) => o.kindMatches(value));
  }
  /**
   * The first option that accepts the value. When none does: the problems inside the value
   * found by the one option of its kind (an object's keys, a list's items), or else what the
   * options accept.
   */
  run(value: unknown, path: Path, issues: Issue[]): UnionOut<U> | Bad {
    const tries: Issue[][] = [];
    for (const o of this.options) {
      const mine: Issue[] = [];
      const v = o.run(value, path, mine);
      if (v !== BAD && mine.length === 0) return v as UnionOut<U>;
      tries.push(mine);
    }
    const sameKind = this.options.map((o, i) => (o.kindMatches(value) ? i : -1)).filter((i) => i >= 0);
    const inside = sameKind.length === 1 ? tries[sameKind[0]] : [];
    if (inside.length && inside.every((i) => i.path.length > path.length)) {
      issues.push(...inside);
      return BAD;
    }
    return this.wrongKind(path, issues, value);
  }
}

/** The schema builders. */
export const s = {
  string: (): StringSchema => new StringSchema(),
  number: (): NumberSchema => new NumberSchema(),
  boolean: (): BooleanSchema => new BooleanSchema(),
  unknown: (): UnknownSchema => new UnknownSchema(),
  /** One of these strings. */
  enum: <const T extends string>(options: readonly T[]): EnumSchema<T> => new EnumSchema<T>(options),
  /** Exactly this value. */
  literal: <const T extends string | number | boolean>(value: T): EnumSchema<T> => new EnumSchema<T>([value]),
  array: <T extends AnySchema>(item: T): ArraySchema<T> => new ArraySchema(item),
  object: <S extends Shape>(shape: S): ObjectSchema<S> => new ObjectSchema(shape),
  union: <const U extends readonly AnySchema[]>(options: U): UnionSchema<U> => new UnionSchema(options),
};

export type { StringSchema, NumberSchema, BooleanSchema, EnumSchema, ArraySchema, ObjectSchema, UnionSchema, Optional, Defaulted };
