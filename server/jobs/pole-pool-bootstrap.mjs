// Loads a pole-search pool thread through tsx's loader, whether the parent runs
// under tsx (npm start), vitest, or plain node.
import { register } from 'tsx/esm/api';

register();
await import('./pole-pool-thread.ts');
