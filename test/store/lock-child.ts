/**
 * The child of the lock test (lock.test.ts): opens the project for writing (taking its lock),
 * saves one plan, prints "ready PID" and keeps the project open until stdin closes or says "close".
 *
 *   node --import tsx test/store/lock-child.ts FILE
 */
import { writeSync } from 'node:fs';
import { openProject } from '../../src/api/project.js';
import { syntheticPlan, syntheticStops } from './synthetic.js';

const file = process.argv[2];
if (!file) throw new Error('usage: lock-child.ts FILE');
const handle = await openProject(file);
const stops = syntheticStops(500, 1);
handle.store.savePlan({ stops, plan: syntheticPlan(stops, 4, 1) }, 'from the child');
writeSync(1, `ready ${process.pid}\n`);
process.stdin.setEncoding('utf8');
let input = '';
const done = async (): Promise<void> => {
  await handle.close();
  writeSync(1, 'closed\n');
  process.exit(0);
};
process.stdin.on('data', (chunk: string) => {
  input += chunk;
  if (input.includes('close')) void done();
});
process.stdin.on('end', () => void done());
