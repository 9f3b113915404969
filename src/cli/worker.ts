/**
 * The worker thread of the batch pool (src/cli/pool.ts): receives one file job at a time,
 * runs processFileOutcome on it and posts back the report and the picture data (their
 * buffers transferred, not copied).
 */
import { parentPort } from 'node:worker_threads';
import { processFileOutcome, toReportError, type FileJob, type FileOutcome } from '../lib/processFile.js';
import type { ProcessOptions } from '../lib/options.js';
import { pictureBuffers } from '../report/uvPicture.js';

/** A message from the pool: process job `id`. */
export interface WorkerRequest {
  id: number;
  job: FileJob;
  options: ProcessOptions;
}

/** The answer: job `id`'s outcome. */
export interface WorkerAnswer {
  id: number;
  outcome: FileOutcome;
}

const port = parentPort;
if (port) {
  port.on('message', async (msg: WorkerRequest) => {
    let outcome: FileOutcome;
    try {
      outcome = await processFileOutcome(msg.job, msg.options);
    } catch (err) {
      // processFileOutcome reports bad input itself; this is a programming error.
      outcome = {
        report: {
          input: msg.job.displayInput, output: null, status: 'failed', error: toReportError(err),
          gates: [], primitives: [], warnings: [], notes: [], seconds: 0,
        },
        pictures: [],
      };
    }
    const answer: WorkerAnswer = { id: msg.id, outcome };
    // The view sheets' PNG bytes go along transferred too (each owns its ArrayBuffer).
    const sheets = [outcome.views?.sheet, outcome.views?.page].filter((b): b is Uint8Array => !!b).map((b) => b.buffer as ArrayBuffer);
    port.postMessage(answer, [...pictureBuffers(outcome.pictures), ...sheets]);
  });
  // Every module loaded: the pool may send jobs.
  port.postMessage({ ready: true });
}
