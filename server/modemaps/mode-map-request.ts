// The request schema is part of the HTTP contract: shared/api/mode-maps.ts.
export { type ModeMapRequest } from '../../shared/api/mode-maps.js';
