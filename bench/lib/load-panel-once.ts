/**
 * One panel load in a new process (bench/daily.ts runs it): the same store -> returns path
 * as the bench's loop, timed once, on code V8 has not compiled yet, as a command meets it.
 * Prints {"cpu": s, "wall": s} of the load alone (module loading not counted).
 *
 *   node --import tsx bench/lib/load-panel-once.ts DB FACTOR[,FACTOR...]
 */
import { buildPanel } from '../../shared/returns/index.js';
import { loadPanelInput } from '../../src-main/data/panel.js';
import { Store } from '../../src-main/store/store.js';
import { timeHere } from './anchor.js';
import { dailyPanelSpec } from './scenario.js';

const [db, factors] = process.argv.slice(2);
const spec = dailyPanelSpec(factors.split(','));
const store = new Store(db, { mustExist: true });
const t = timeHere(() => buildPanel(loadPanelInput(store, spec)));
store.close();
process.stdout.write(JSON.stringify(t));
