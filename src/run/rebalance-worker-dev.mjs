// Development entry of the rebalance worker: registers tsx's loader, then runs the TypeScript source.
// The built app uses the bundled rebalance-worker.mjs instead.
import { register } from 'tsx/esm/api';

register();
await import('./rebalance-worker.ts');
