/**
 * The child of the SIGKILL test (crash.test.ts): opens the project for writing and saves plans
 * plan-0, plan-1, ... for ever, printing each name on stdout once its save has committed. The
 * parent kills it with SIGKILL in the middle of this stream.
 *
 *   node --import tsx test/store/save-child.ts FILE
 */
import { writeSync } from 'node:fs';
import { ProjectStore } from '../../src/store/index.js';
import { crashCase, figuresOf } from './synthetic.js';

const file = process.argv[2];
if (!file) throw new Error('usage: save-child.ts FILE');
const store = ProjectStore.open(file, { write: true });
for (let i = 0; ; i++) {
  const c = crashCase(i);
  store.savePlan({ stops: c.stops, plan: c.plan, figures: figuresOf(c.stops, c.plan) }, c.name);
  writeSync(1, `${c.name}\n`); // synchronous: the loop never yields to the event loop
}
