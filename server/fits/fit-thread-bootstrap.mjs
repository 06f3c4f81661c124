// Loads the TypeScript fit thread through tsx's loader (as engine-thread-bootstrap.mjs does).
import { register } from 'tsx/esm/api';

register();
await import('./fit-thread.ts');
