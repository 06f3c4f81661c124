// Entry of a compute thread of the pool (compute-pool.ts): loads the TypeScript task
// module through tsx, whether the API runs under tsx (npm start), vitest or plain node.
import { register } from 'tsx/esm/api';

register();
const { runComputeTask } = await import('./compute-tasks.ts');
export default runComputeTask;
