// Runs autocannon in its own process, so the load generator does not share the
// event loop of the server it measures. Reads its options as JSON from argv[2]
// (autocannon's, plus `distinctPathsFile`),
// prints one JSON line: { rps, requests, non2xx, errors, p50, p95, p99, duration }
// (errors: connection errors and timeouts, which have no status).
import { readFileSync } from 'node:fs';
import autocannon from 'autocannon';

const opts = JSON.parse(process.argv[2]);
// `distinctPathsFile`: a JSON list of paths; every request, over all connections, takes the
// next one (a load where no two requests are the same while the list lasts).
if (opts.distinctPathsFile) {
  const paths = JSON.parse(readFileSync(opts.distinctPathsFile, 'utf8'));
  delete opts.distinctPathsFile;
  let next = 0;
  opts.requests = [{ method: 'GET', setupRequest: (req) => ({ ...req, path: paths[next++ % paths.length] }) }];
}
const samples = [];
let non2xx = 0;
const instance = autocannon(opts, (err, result) => {
  if (err) {
    console.error(err.message);
    process.exit(1);
  }
  samples.sort((a, b) => a - b);
  const pct = (p) => samples[Math.min(samples.length - 1, Math.floor((p / 100) * samples.length))] ?? NaN;
  console.log(
    JSON.stringify({
      rps: result.requests.average,
      requests: samples.length,
      non2xx,
      errors: result.errors + result.timeouts,
      p50: pct(50),
      p95: pct(95),
      p99: pct(99),
      duration: result.duration,
    }),
  );
});
instance.on('response', (_client, status, _bytes, ms) => {
  samples.push(ms);
  if (status < 200 || status >= 300) non2xx++;
});
