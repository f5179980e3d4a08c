// Development entry of the boundaries worker: registers tsx's loader, then runs the TypeScript source.
// The built app uses the bundled boundaries-worker.mjs instead.
import { register } from 'tsx/esm/api';

register();
await import('./boundaries-worker.ts');
