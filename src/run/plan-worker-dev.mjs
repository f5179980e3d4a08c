// Development entry of the plan worker: registers tsx's loader, then runs the TypeScript source.
// The built app uses the bundled plan-worker.mjs instead.
import { register } from 'tsx/esm/api';

register();
await import('./plan-worker.ts');
