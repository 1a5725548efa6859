declare module '*.vue' {
  import type { DefineComponent } from 'vue';
  const component: DefineComponent<object, object, unknown>;
  export default component;
}

interface Window {
  /** Present only inside the Electron app (preload). */
  deflator?: import('../../shared/bridge/preload-api.js').PreloadApi;
}
declare module '*.css';
