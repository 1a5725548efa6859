/** Fan-out of bridge events (progress, task ends, menus) to every connected window or stream. */
import type { BridgeEvent } from '../../shared/bridge/types.js';

export class EventHub {
  private readonly listeners = new Set<(e: BridgeEvent) => void>();

  emit = (event: BridgeEvent): void => {
    for (const l of this.listeners) {
      try {
        l(event);
      } catch {
        // a broken listener (closed window, dropped stream) must not stop the others
      }
    }
  };

  subscribe = (listener: (e: BridgeEvent) => void): (() => void) => {
    this.listeners.add(listener);
    return () => {
      this.listeners.delete(listener);
    };
  };
}
