// Development entry of the start worker: registers tsx's loader, then runs the TypeScript source.
// The built app uses the bundled start-worker.mjs instead.
import { register } from 'tsx/esm/api';

register();
await import('./start-worker.ts');
