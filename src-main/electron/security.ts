/**
 * The Electron window's security settings in one place, so a test can hold them to
 * the rules: context isolation, no Node in the page, the Chromium sandbox, a preload
 * that exposes one typed object, no navigation away from the app, no new windows,
 * no webviews, no permissions beyond writing to the clipboard.
 */
import type { BrowserWindowConstructorOptions, WebContents } from 'electron';

/** The app's pages load from this privileged scheme (standard + secure), never from file: or http:. */
export const APP_SCHEME = 'deflator';
export const APP_ORIGIN = `${APP_SCHEME}://app`;
export const APP_URL = `${APP_ORIGIN}/index.html`;

export function windowOptions(preload: string): BrowserWindowConstructorOptions {
  return {
    width: 1400,
    height: 900,
    minWidth: 1024,
    minHeight: 640,
    show: false,
    backgroundColor: '#f6f5f1',
    title: 'deflator',
    webPreferences: {
      preload,
      contextIsolation: true,
      nodeIntegration: false,
      nodeIntegrationInWorker: false,
      nodeIntegrationInSubFrames: false,
      sandbox: true,
      webSecurity: true,
      allowRunningInsecureContent: false,
      webviewTag: false,
      experimentalFeatures: false,
      navigateOnDragDrop: false,
      spellcheck: false,
    },
  };
}

/** Is this URL one of the app's own pages? */
export function isAppUrl(url: string): boolean {
  try {
    const u = new URL(url);
    return u.protocol === `${APP_SCHEME}:` && u.host === 'app';
  } catch {
    return false;
  }
}

/** Blocks navigation, new windows and webviews on a window's contents. */
export function hardenContents(contents: WebContents): void {
  contents.on('will-navigate', (event, url) => {
    if (!isAppUrl(url) || url.split('#')[0] !== contents.getURL().split('#')[0]) event.preventDefault();
  });
  contents.on('will-redirect', (event) => event.preventDefault());
  contents.on('will-attach-webview', (event) => event.preventDefault());
  contents.setWindowOpenHandler(() => ({ action: 'deny' }));
}

/** Only the clipboard write used by "Copy table" is granted; everything else is refused. */
export const ALLOWED_PERMISSIONS: readonly string[] = ['clipboard-sanitized-write'];
