/**
 * Runs the CLI in-process with captured streams.
 */
import { main } from '../../src/cli/main.js';
import type { ProgressClock } from '../../src/cli/progress.js';
import { assertReportsOf, snapshotReports } from './schemas.js';

/** Captured outcome of one CLI run. */
export interface CliRun {
  code: number;
  stdout: string;
  stderr: string;
}

/**
 * Worker threads started by in-process runs load the TypeScript sources through this entry,
 * so they run the same code as the test (see tsWorker.mjs).
 */
export const TS_WORKER = new URL('./tsWorker.mjs', import.meta.url);

/** Extra stream facts for a run (defaults: neither stream is a terminal). */
export interface CliRunOptions {
  stdoutIsTTY?: boolean;
  stderrIsTTY?: boolean;
  /** The terminal's width for the progress bar (default: unknown). */
  columns?: number;
  /** The clock progress reads (default: FROZEN_CLOCK). */
  clock?: ProgressClock;
}

/**
 * A clock that never moves and never fires: with it no batch ever lasts 10 s, so a slow
 * machine cannot add progress records to a test's stderr. Tests of the records pass their own.
 */
export const FROZEN_CLOCK: ProgressClock = { now: () => 0, every: () => () => {} };

/**
 * Runs `tanframe <argv...>` in `cwd` without spawning a process. Every JSON report the run
 * writes (--report, --json) is checked against schema/tanframe-report-1.schema.json; a
 * report that does not match fails the test.
 */
export async function runCli(
  argv: string[],
  cwd: string,
  env: Record<string, string | undefined> = {},
  streams: CliRunOptions = {},
): Promise<CliRun> {
  let stdout = '';
  let stderr = '';
  const before = snapshotReports(argv, cwd);
  const code = await main(argv, {
    stdout: (s) => { stdout += s; },
    stderr: (s) => { stderr += s; },
    cwd,
    isTTY: !!streams.stdoutIsTTY,
    env,
    stderrIsTTY: !!streams.stderrIsTTY,
    stderrColumns: () => streams.columns,
    clock: streams.clock ?? FROZEN_CLOCK,
    workerScript: TS_WORKER,
  });
  assertReportsOf(argv, cwd, stdout, before);
  return { code, stdout, stderr };
}
