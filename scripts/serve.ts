// `tsx scripts/serve.ts`: the API and the workers under supervision, with no set-up
// (the database must exist and be migrated). The fault tests start the app this way.
import { loadConfig } from '../server/config.js';
import { DEFAULT_BACK_OFF } from './child-supervisor.js';
import { startServices, stopOnSignals } from './services.js';

const config = loadConfig();
// Tests shorten the first back-off step (POLEWARD_RESTART_FIRST_SECONDS) to see a restart quickly.
const first = Number(process.env.POLEWARD_RESTART_FIRST_SECONDS ?? DEFAULT_BACK_OFF.firstSeconds);
stopOnSignals(startServices({ workers: config.workers, backOff: { ...DEFAULT_BACK_OFF, firstSeconds: first } }));
