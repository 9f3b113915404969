/**
 * Runs a list of file jobs, in-process or on the worker pool, and collects their reports in
 * input order.
 */
import type { FileJob, FileOutcome } from '../lib/processFile.js';
import type { ProcessOptions } from '../lib/options.js';
import type { FileReport } from '../report/types.js';
import type { UvPicture } from '../report/uvPicture.js';
import type { ViewSheet } from '../lib/viewSheets.js';
import { defaultWorkerScript, runInWorkers } from './pool.js';

/** How to run a batch. */
export interface RunSettings {
  /**
   * Worker threads; 1 runs every file on this thread, one after the other (no worker), unless
   * a file timeout needs a thread it can stop (a batch, or a single file with pictures or view sheets).
   */
  threads: number;
  /** Milliseconds a file may take before it fails with 'timeout' (a single file too); 0 or absent: no limit. */
  fileTimeoutMs?: number;
  /** The worker script (default: defaultWorkerScript()). */
  workerScript?: URL;
  /** Receives each file's pictures and view sheets, in job order (whatever order the files finish in). */
  onPictures?: (index: number, pictures: UvPicture[], views: ViewSheet | null) => void;
  /** Receives each job's whole outcome, in completion order. */
  onOutcome?: (index: number, outcome: FileOutcome) => void;
  /** Called after each file, in completion order, with the count done so far and the file's report. */
  onProgress?: (done: number, total: number, input: string, report: FileReport) => void;
}

/**
 * Processes `jobs` and returns their reports in the order of `jobs`. Without a file timeout, one
 * job, or several with one thread, run here; with one, a single job without pictures or view
 * sheets runs here under it (processFileOutcome's time limit), and otherwise they run on
 * min(threads, jobs) worker threads (at least one, so a file past the timeout can be stopped).
 * A number as `settings` is the thread count.
 */
export async function runFiles(jobs: FileJob[], options: ProcessOptions, settings: RunSettings | number): Promise<FileReport[]> {
  const s: RunSettings = typeof settings === 'number' ? { threads: settings } : settings;
  const reports: FileReport[] = new Array(jobs.length);
  // Pictures wait here until every earlier job has given its own, then go out in job order.
  const waiting: (FileOutcome | undefined)[] = new Array(jobs.length);
  let released = 0;
  let done = 0;
  const take = (index: number, outcome: FileOutcome) => {
    reports[index] = outcome.report;
    s.onOutcome?.(index, outcome);
    done++;
    s.onProgress?.(done, jobs.length, outcome.report.input, outcome.report);
    if (!s.onPictures) return;
    waiting[index] = outcome;
    while (released < jobs.length && waiting[released] !== undefined) {
      const ready = waiting[released]!;
      waiting[released] = undefined;
      s.onPictures(released, ready.pictures, ready.views ?? null);
      released++;
    }
  };
  const timeoutMs = s.fileTimeoutMs ?? 0;
  if (jobs.length === 0) return reports; // nothing to run (a rerun with every file up-to-date): no reader is loaded
  // A single file without pictures or view sheets runs here under its timeout (processFileOutcome
  // stops its solve and encoding at the deadline), sparing a second isolate, its module loads
  // and its heap. A batch with a timeout, and a file drawing pictures, run on worker threads
  // the pool can stop.
  const alone = jobs.length === 1 && !jobs[0].pictures && !jobs[0].views;
  if (timeoutMs <= 0 ? jobs.length === 1 || s.threads <= 1 : alone) {
    // Loaded here: a batch on worker threads never needs the readers on this thread.
    const { processFileOutcome } = await import('../lib/processFile.js');
    for (let i = 0; i < jobs.length; i++) take(i, await processFileOutcome(jobs[i], options, timeoutMs));
  } else {
    await runInWorkers(jobs, options, Math.max(1, s.threads), s.workerScript ?? defaultWorkerScript(), take, timeoutMs);
  }
  return reports;
}
