// Development entry of the export worker: registers tsx's loader, then runs the TypeScript source.
// The built app uses the bundled export-worker.mjs instead.
import { register } from 'tsx/esm/api';

register();
await import('./export-worker.ts');
