// Loads the TypeScript study-step thread through tsx's loader, whether the parent
// runs under tsx (npm run worker), vitest, or plain node.
import { register } from 'tsx/esm/api';

register();
await import('./study-step-thread.ts');
