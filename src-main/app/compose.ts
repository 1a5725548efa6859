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
}

export interface AppCore {
  dispatcher: Dispatcher;
  hub: EventHub;
  tasks: TaskRegistry;
}

export function composeApp(parts: AppParts): AppCore {
  const hub = new EventHub();
  const tasks = new TaskRegistry();
  const handlers = createHandlers({ ...parts, tasks });
  const dispatcher = createDispatcher(handlers, hub.emit, tasks);
  return { dispatcher, hub, tasks };
}
