/**
 * Opens an SQLite database with better-sqlite3: the one place the store (and the demo
 * builder) construct a connection.
 *
 * Outside Electron the native addon is named by its path (better-sqlite3's `nativeBinding`
 * option), so the command line does not search the file system for it: by default the
 * package looks for the addon through the `bindings` package, which tries a dozen folders
 * (a few milliseconds of every command), and in the command-line bundle, where
 * better-sqlite3's JavaScript is bundled (and so compiled once into the code cache,
 * scripts/build.mjs), that search would start from the bundle's folder and miss. Electron
 * keeps the package's own search: its packaged addon sits outside the app archive, where
 * the package finds it.
 */
import Database from 'better-sqlite3';
import { existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

let addonPath: string | null | undefined;

const ADDON = path.join('better-sqlite3', 'build', 'Release', 'better_sqlite3.node');

/**
 * The addon's path (better-sqlite3's build/Release), or null in Electron. Found as Node
 * finds the package: in node_modules of this module's folder or of the nearest folder
 * above that has it (a few file checks; Node's own resolver, which also reads the
 * package's manifest, took about 1.4 ms of every command). Node's resolver remains the
 * fallback for layouts without such a folder.
 */
function addon(): string | null {
  if (addonPath !== undefined) return addonPath;
  addonPath = null;
  if (process.versions.electron) return addonPath;
  for (let dir = import.meta.dirname ?? path.dirname(fileURLToPath(import.meta.url)); ; dir = path.dirname(dir)) {
    const candidate = path.join(dir, 'node_modules', ADDON);
    if (existsSync(candidate)) return (addonPath = candidate);
    if (path.dirname(dir) === dir) break;
  }
  const pkg = createRequire(import.meta.url).resolve('better-sqlite3/package.json');
  return (addonPath = path.join(path.dirname(path.dirname(pkg)), ADDON));
}

/** A connection to `file` with better-sqlite3's options. */
export function openSqlite(file: string, options: Database.Options = {}): Database.Database {
  const binding = addon();
  return new Database(file, binding ? { ...options, nativeBinding: binding } : options);
}

/**
 * The statements `make` names, each prepared the first time it is read (then kept): a
 * statement costs its SQL compilation even when the caller never runs it.
 */
export function preparedOnUse<T extends Record<string, (db: Database.Database) => object>>(db: Database.Database, make: T): { [K in keyof T]: ReturnType<T[K]> } {
  const out = {} as { [K in keyof T]: ReturnType<T[K]> };
  for (const name of Object.keys(make) as (keyof T & string)[]) {
    Object.defineProperty(out, name, {
      configurable: true,
      get() {
        const statement = make[name](db);
        Object.defineProperty(out, name, { value: statement });
        return statement;
      },
    });
  }
  return out;
}
