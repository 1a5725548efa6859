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
import { createRequire } from 'node:module';
import path from 'node:path';

let addonPath: string | null | undefined;

/** The addon's path (better-sqlite3's build/Release), or null in Electron. */
function addon(): string | null {
  if (addonPath !== undefined) return addonPath;
  addonPath = null;
  if (process.versions.electron) return addonPath;
  const pkg = createRequire(import.meta.url).resolve('better-sqlite3/package.json');
  addonPath = path.join(path.dirname(pkg), 'build', 'Release', 'better_sqlite3.node');
  return addonPath;
}

/** A connection to `file` with better-sqlite3's options. */
export function openSqlite(file: string, options: Database.Options = {}): Database.Database {
  const binding = addon();
  return new Database(file, binding ? { ...options, nativeBinding: binding } : options);
}
