/**
 * A small pool of worker threads (node:worker_threads) over file jobs. Ours rather than a
 * library: the batch needs only "one job per idle thread, answers by id, a crashed thread
 * fails its one file and is replaced", which is shorter to write than to adapt. A file that
 * takes longer than the file timeout has its thread terminated and fails with 'timeout'.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import { TanframeError } from '../mesh/errors.js';
import { removeThreadTemps } from '../io/files.js';
import type { FileJob, FileOutcome } from '../lib/processFile.js';
import type { ProcessOptions } from '../lib/options.js';
import type { WorkerAnswer, WorkerRequest } from './worker.js';

/**
 * The compiled worker beside this module (dist/cli/worker.js). When this module runs from
 * its TypeScript source (tests), the compiled one under dist/ is used unless the caller
 * names another script (the test helper passes one that loads the TypeScript sources).
 */
export function defaultWorkerScript(): URL {
  const here = new URL(import.meta.url);
  const sibling = new URL('./worker.js', here);
  if (!here.pathname.endsWith('.ts')) return sibling;
  return new URL('../../dist/cli/worker.js', here);
}

function failedOutcome(job: FileJob, message: string): FileOutcome {
  return {
    report: {
      input: job.displayInput, output: null, status: 'failed', error: { code: 'internal', message },
      gates: [], primitives: [], warnings: [], notes: [], seconds: 0,
    },
    pictures: [],
  };
}

/** The outcome of a job stopped by the file timeout: failed with code 'timeout'. */
function timeoutOutcome(job: FileJob, timeoutMs: number): FileOutcome {
  const message = `stopped after ${timeoutMs / 1000} s (--file-timeout)`;
  const outcome = failedOutcome(job, message);
  outcome.report.error = { code: 'timeout', message };
  outcome.report.seconds = timeoutMs / 1000;
  return outcome;
}

/**
 * Runs `jobs` on min(threads, jobs.length) worker threads started from `script`, one job per
 * thread at a time. `onOutcome(i, outcome)` is called once per job, in completion order. A
 * thread that dies (uncaught error, out of memory) fails the job it held with code 'internal'
 * and is replaced; the batch goes on. With `fileTimeoutMs` > 0, a job still running that long
 * after it was handed out has its thread terminated (the temporary files that thread left in
 * the job's output folder are removed) and fails with code 'timeout'; a new thread takes over.
 * Resolves when every job has its outcome.
 * Throws a TanframeError when the script is missing or a thread dies before it is ready
 * (its first message, { ready: true }, says its modules loaded).
 */
export async function runInWorkers(
  jobs: FileJob[],
  options: ProcessOptions,
  threads: number,
  script: URL,
  onOutcome: (index: number, outcome: FileOutcome) => void,
  fileTimeoutMs = 0,
): Promise<void> {
  if (jobs.length === 0) return;
  if (script.protocol === 'file:' && !fs.existsSync(fileURLToPath(script))) {
    throw new TanframeError('internal', `the worker script ${fileURLToPath(script)} is missing (run \`npm run build\`, or use --jobs 1 --file-timeout 0)`);
  }
  const count = Math.max(1, Math.min(threads, jobs.length));
  let next = 0;
  let finished = 0;
  await new Promise<void>((resolve, reject) => {
    let stopped = false;
    const live = new Set<Worker>();
    const stopAll = () => {
      stopped = true;
      for (const w of live) void w.terminate();
      live.clear();
    };
    const deliver = (index: number, outcome: FileOutcome) => {
      finished++;
      try {
        onOutcome(index, outcome);
      } catch (err) {
        stopAll();
        reject(err);
        return;
      }
      if (finished === jobs.length) {
        stopAll();
        resolve();
      }
    };
    const start = () => {
      const worker = new Worker(script);
      live.add(worker);
      let current = -1;
      let ready = false;
      let timer: NodeJS.Timeout | null = null;
      const clearTimer = () => {
        if (timer) clearTimeout(timer);
        timer = null;
      };
      const timedOut = () => {
        timer = null;
        if (stopped || !live.has(worker) || current < 0) return;
        const lost = current;
        current = -1;
        live.delete(worker);
        const output = jobs[lost].output;
        const threadId = worker.threadId;
        // Once the thread has stopped, remove what it was writing (best effort).
        void worker.terminate().then(() => (output ? removeThreadTemps(path.dirname(output), threadId) : undefined)).catch(() => undefined);
        deliver(lost, timeoutOutcome(jobs[lost], fileTimeoutMs));
        if (!stopped && next < jobs.length) start();
      };
      const feed = () => {
        if (stopped) return;
        if (next >= jobs.length) {
          current = -1;
          live.delete(worker);
          void worker.terminate();
          return;
        }
        current = next++;
        const request: WorkerRequest = { id: current, job: jobs[current], options };
        worker.postMessage(request);
        // setTimeout cannot wait longer than 2^31 - 1 ms (about 24 days): beyond that, no limit.
        if (fileTimeoutMs > 0 && fileTimeoutMs <= 0x7fffffff) timer = setTimeout(timedOut, fileTimeoutMs);
      };
      worker.on('message', (answer: WorkerAnswer | { ready: true }) => {
        if ('ready' in answer) {
          ready = true;
          feed();
          return;
        }
        if (answer.id !== current) return;
        clearTimer();
        current = -1;
        deliver(answer.id, answer.outcome);
        feed();
      });
      const died = (why: string) => {
        clearTimer();
        if (stopped || !live.has(worker)) return;
        live.delete(worker);
        if (!ready) {
          // The thread died before its modules loaded: threads cannot run here at all.
          stopAll();
          reject(new TanframeError('internal', `cannot start worker threads: ${why}`));
          return;
        }
        const lost = current;
        current = -1;
        if (lost >= 0) deliver(lost, failedOutcome(jobs[lost], `its worker thread stopped: ${why}`));
        if (!stopped && next < jobs.length) start();
      };
      worker.on('error', (err) => died(err?.message ?? String(err)));
      worker.on('exit', (code) => died(`exit code ${code}`));
    };
    for (let i = 0; i < count; i++) start();
  });
}
