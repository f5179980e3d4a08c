// Development entry of the sweep worker: registers tsx's loader, then runs the TypeScript source.
// The built app uses the bundled sweep-worker.mjs instead.
import { register } from 'tsx/esm/api';

register();
await import('./sweep-worker.ts');
