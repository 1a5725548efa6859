/**
 * The composition root's core: services built with plain constructor arguments, the
 * bridge handlers on top of them, one dispatcher both transports share.
 */
import { createDispatcher } from './dispatch.js';
import type { Dispatcher } from './dispatch.js';
import { EventHub } from './events.js';
import { createHandlers } from './handlers.js';
import type { Engine, FilePolicy, Importer, ProjectData } from './ports.js';
import { TaskRegistry } from './tasks.js';
import type { RunService } from '../runs/service.js';

export interface AppParts {
  version: string;
  project: () => ProjectData;
  importer: () => Importer;
  engine: Engine;
  files: FilePolicy;
  runs?: RunService;
  /** Puts raw failures in words (the open database's storage errors); see createDispatcher. */
  mapError?: (e: unknown) => unknown;
}

export interface AppCore {
  dispatcher: Dispatcher;
  hub: EventHub;
  tasks: TaskRegistry;
}

export function composeApp(parts: AppParts): AppCore {
  const hub = new EventHub();
  const tasks = new TaskRegistry();
  const { mapError, ...services } = parts;
  const handlers = createHandlers({ ...services, tasks });
  const dispatcher = createDispatcher(handlers, hub.emit, tasks, mapError);
  return { dispatcher, hub, tasks };
}
