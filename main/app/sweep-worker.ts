/**
 * The worker thread of the live sweep analysis: the single-diode fit takes a good fraction of
 * a second for a long sweep, which on the backend's event loop would hold up every push,
 * request and serial read meanwhile. Bundled as dist/sweep-worker.cjs beside the CLI.
 */
import { parentPort } from 'node:worker_threads';
import { runSweepJob, type SweepJob } from './sweep-job';

parentPort?.on('message', (message: { id: number; job: SweepJob }) => {
  try {
    parentPort!.postMessage({ id: message.id, report: runSweepJob(message.job) });
  } catch (err) {
    parentPort!.postMessage({ id: message.id, error: err instanceof Error ? err.message : String(err) });
  }
});
