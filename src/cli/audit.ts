/**
 * `tanframe audit`: inspect, report and gate; never writes meshes.
 */
import { expandInputs } from '../io/inputs.js';
import type { FileJob } from '../lib/processFile.js';
import { buildReport } from '../report/json.js';
import type { FileReport } from '../report/types.js';
import { reportOptions, sortReports } from './bake.js';
import { runBatch } from './batch.js';
import { namedWrites, writeReportFiles } from './outputs.js';
import { planRun } from '../lib/writePlan.js';
import { namedExplicitly, perFile, resolveSettings } from './config.js';
import { checkOutputOptions, emitReport, exitStatus, shardOf, toolVersion, type CliIo } from './shared.js';

/** The `audit` command's body, callable in-process. Returns the exit status. */
export async function runAudit(inputs: string[], given: Record<string, any>, io: CliIo): Promise<number> {
  const started = performance.now();
  const settings = resolveSettings(given, io.cwd);
  const { options, o } = settings;
  checkOutputOptions(o);
  const expanded = await expandInputs(inputs, io.cwd, { exclude: o.exclude });
  expanded.files = expanded.files.filter((f) => !(settings.excluded(f.path) && !namedExplicitly(inputs, f.path, io.cwd)));
  const reports: FileReport[] = expanded.problems.map((p) => ({
    input: p.input, output: null, status: 'failed' as const, error: { code: 'read-failed', message: p.message },
    gates: [], primitives: [], warnings: [], notes: [], seconds: 0,
  }));
  const jobs: FileJob[] = shardOf(expanded.files, o.shard).map((f) => ({
    command: 'audit', input: f.path, output: null, format: null, dryRun: true, displayInput: f.display, displayOutput: null,
    ...perFile(settings, f.path),
  }));
  // Audit writes no meshes: the plan holds the report files and --uv-maps, checked against every input and what it references.
  const run = await planRun({ cwd: io.cwd, inputs: expanded.files.map((f) => f.path), meshes: [], ...namedWrites(o, io) });
  const batch = await runBatch(jobs, options, o, io, run.plan);
  for (const r of batch.reports) reports.push(r); // no spread: a batch may hold any number of files
  const seconds = (performance.now() - started) / 1000;
  const report = buildReport('audit', toolVersion(), options.method, reportOptions(o), sortReports(reports), seconds);
  const writeFailures = batch.writeFailures + (await writeReportFiles(report, o, io, batch.pictures, run.files)) + (await emitReport(report, o, io, run.files));
  return exitStatus(report.files, writeFailures);
}
