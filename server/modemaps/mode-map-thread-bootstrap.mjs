// Loads the TypeScript mode-map thread through tsx's loader (as engine-thread-bootstrap.mjs does).
import { register } from 'tsx/esm/api';

register();
await import('./mode-map-thread.ts');
