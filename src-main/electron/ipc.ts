/**
 * The bridge over Electron IPC: one ipcMain.handle per call of the table, generated
 * from it. Each handler checks the sender (the app's own window, showing an app page)
 * before anything else, then hands the raw request to the shared dispatcher, which
 * validates it; the reply is always an envelope.
 */
import type { IpcMain, IpcMainInvokeEvent } from 'electron';
import { CALL_NAMES } from '../../shared/bridge/calls.js';
import { errorReply } from '../../shared/bridge/envelope.js';
import { ipcChannel } from '../../shared/bridge/preload-api.js';
import type { Dispatcher } from '../app/dispatch.js';
import { isAppUrl } from './security.js';

/** The sender is trusted when it is one of our windows' main frame, showing an app page. */
export type SenderCheck = (event: IpcMainInvokeEvent) => boolean;

export function makeSenderCheck(trustedIds: () => number[]): SenderCheck {
  return (event) => {
    const frame = event.senderFrame;
    if (!frame || !trustedIds().includes(event.sender.id)) return false;
    if (frame.parent !== null) return false;
    return isAppUrl(frame.url);
  };
}

export function registerBridgeHandlers(ipcMain: IpcMain, dispatcher: () => Dispatcher, trusted: SenderCheck): string[] {
  const channels: string[] = [];
  for (const name of CALL_NAMES) {
    const channel = ipcChannel(name);
    ipcMain.handle(channel, async (event: IpcMainInvokeEvent, request: unknown, taskId: unknown) => {
      if (!trusted(event)) return errorReply('FORBIDDEN', `${name}: refused a call from a page that is not the app`, 'only the app window may call the bridge');
      return dispatcher().dispatch(name, request, taskId);
    });
    channels.push(channel);
  }
  return channels;
}
