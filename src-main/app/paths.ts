/**
 * Where the app keeps its own files: the user-data folder (the demo database, uploaded
 * import files). $DEFLATOR_HOME overrides it (tests, portable installs); the Electron
 * shell passes its own app.getPath('userData').
 */
import os from 'node:os';
import path from 'node:path';

export function userDataDir(env: NodeJS.ProcessEnv = process.env, platform: NodeJS.Platform = process.platform): string {
  if (env.DEFLATOR_HOME) return path.resolve(env.DEFLATOR_HOME);
  const home = os.homedir();
  if (platform === 'win32') return path.join(env.APPDATA ?? path.join(home, 'AppData', 'Roaming'), 'deflator');
  if (platform === 'darwin') return path.join(home, 'Library', 'Application Support', 'deflator');
  return path.join(env.XDG_DATA_HOME ?? path.join(home, '.local', 'share'), 'deflator');
}

/** The bundled demo database, built from sample-data/ on first start. */
export function demoDatabasePath(dataDir: string): string {
  return path.join(dataDir, 'demo.db');
}
