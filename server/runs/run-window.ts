// The run request is part of the HTTP contract: shared/api/runs.ts.
export { type RunRequest } from '../../shared/api/runs.js';
