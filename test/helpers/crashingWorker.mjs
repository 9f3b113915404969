// Worker-thread entry for the pool's tests: the real worker (TypeScript sources), except that
// a job whose input path contains "crash-me" ends the thread at once, as a fatal error would.
import { parentPort } from 'node:worker_threads';

parentPort.on('message', (msg) => {
  if (typeof msg?.job?.input === 'string' && msg.job.input.includes('crash-me')) process.exit(3);
});
await import('./tsWorker.mjs');
