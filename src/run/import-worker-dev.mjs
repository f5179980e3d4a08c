// Development entry of the import worker: registers tsx's loader, then runs the TypeScript source.
// The built app uses the bundled import-worker.mjs instead.
import { register } from 'tsx/esm/api';

register();
await import('./import-worker.ts');
