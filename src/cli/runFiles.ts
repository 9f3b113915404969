/**
 * Runs a list of file jobs and collects their reports in input order.
 */
import { processFile, type FileJob } from '../lib/processFile.js';
import type { ProcessOptions } from '../lib/options.js';
import type { FileReport } from '../report/types.js';

/**
 * Processes `jobs` with up to `jobsInFlight` files at once on this thread (IO overlaps; the
 * solve itself runs one file at a time). Reports come back in the order of `jobs`.
 */
export async function runFiles(jobs: FileJob[], options: ProcessOptions, jobsInFlight: number): Promise<FileReport[]> {
  const out: FileReport[] = new Array(jobs.length);
  let next = 0;
  const lanes = Math.max(1, Math.min(jobsInFlight, jobs.length));
  const lane = async () => {
    for (;;) {
      const i = next++;
      if (i >= jobs.length) return;
      out[i] = await processFile(jobs[i], options);
    }
  };
  await Promise.all(Array.from({ length: lanes }, lane));
  return out;
}
