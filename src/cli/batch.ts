/**
 * The batch both `bake` and `audit` run: jobs on the worker pool (or in-process), the
 * progress bar, and the pictures streamed to --uv-maps / --views / --html as files finish.
 */
import * as os from 'node:os';
import type { FileJob, FileOutcome } from '../lib/processFile.js';
import type { ProcessOptions } from '../lib/options.js';
import type { FileReport } from '../report/types.js';
import type { WritePlan } from '../lib/writePlan.js';
import { PictureOutputs } from './outputs.js';
import { ProgressBar, ProgressRecords, progressRecordsWanted, progressWanted } from './progress.js';
import { runFiles } from './runFiles.js';
import { DEFAULT_FILE_TIMEOUT_S, type CliIo } from './shared.js';

/**
 * Worker threads for `--jobs`: at most the cores this process may use (the default), since
 * more threads only add memory (each holds its own heap) without adding speed; the pool also
 * starts no more threads than there are files.
 */
export function threadCount(o: Record<string, any>): number {
  const cores = os.availableParallelism();
  return Math.min(o.jobs ?? cores, cores);
}

/** Milliseconds one file may take, alone or in a batch (--file-timeout; 0: no limit). */
export function fileTimeoutMs(o: Record<string, any>): number {
  return Math.round((o.fileTimeout ?? DEFAULT_FILE_TIMEOUT_S) * 1000);
}

/**
 * Runs `jobs` and returns their reports in job order, with the pictures (when --uv-maps or
 * --html asks for them) written (through `plan`'s guard) or kept for the page, and how many
 * pictures could not be written (each told on stderr). `onOutcome` sees each job's outcome.
 */
export async function runBatch(
  jobs: FileJob[],
  options: ProcessOptions,
  o: Record<string, any>,
  io: CliIo,
  plan: WritePlan | null = null,
  onOutcome?: (index: number, outcome: FileOutcome) => void,
): Promise<{ reports: FileReport[]; pictures: PictureOutputs; writeFailures: number }> {
  const pictures = await new PictureOutputs(o, io, undefined, plan).ready();
  const views = pictures.views.wants();
  const withPictures = pictures.wanted || views ? jobs.map((j) => ({ ...j, pictures: pictures.wanted, views })) : jobs;
  const bar = progressWanted(!!io.stderrIsTTY, io.env, o) && jobs.length > 0
    ? new ProgressBar(io.stderr, jobs.length, io.clock ? () => io.clock!.now() : undefined, io.stderrColumns)
    : null;
  const records = progressRecordsWanted(!!io.stderrIsTTY, io.env, o) && jobs.length > 0 ? new ProgressRecords(io.stderr, jobs.length, io.clock) : null;
  let reports: FileReport[];
  try {
    reports = await runFiles(withPictures, options, {
      threads: threadCount(o),
      fileTimeoutMs: fileTimeoutMs(o),
      workerScript: io.workerScript,
      onOutcome,
      onPictures: pictures.wanted || views
        ? (_i, list, sheets) => {
            pictures.take(list);
            pictures.views.take(sheets);
          }
        : undefined,
      onProgress: bar || records
        ? (done, _total, input, report) => {
            bar?.update(done, input);
            records?.update(report);
          }
        : undefined,
    });
  } finally {
    bar?.finish();
    records?.finish();
  }
  const { failed } = await pictures.finish();
  return { reports, pictures, writeFailures: failed };
}
