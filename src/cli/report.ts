/**
 * `tanframe report`: merges JSON reports (the shards of one run) and prints and writes what
 * the whole run would have: the summary, --html, --junit, --json, --annotate.
 */
import * as fs from 'node:fs/promises';
import * as path from 'node:path';
import { TanframeError } from '../mesh/errors.js';
import { checkReportShape, mergeReports, type NamedReport } from '../lib/mergeReports.js';
import { PictureOutputs, writeNamedFile, writeReportFiles } from './outputs.js';
import { emitReport, exitStatus, toProcessOptions, type CliIo } from './shared.js';

/** Reads one JSON report; an unreadable or malformed one is a usage error (exit 2) naming it. */
async function readReport(file: string, io: CliIo): Promise<NamedReport> {
  let text: string;
  try {
    text = await fs.readFile(path.resolve(io.cwd, file), 'utf8');
  } catch (err) {
    throw new TanframeError('usage', `cannot read the report ${file}: ${(err as NodeJS.ErrnoException).code ?? (err as Error).message}`);
  }
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    throw new TanframeError('usage', `${file}: not a tanframe report (not JSON)`);
  }
  return { name: file, report: checkReportShape(value, file) };
}

/** The `report` command's body, callable in-process. Returns the exit status. */
export async function runReport(files: string[], o: Record<string, any>, io: CliIo): Promise<number> {
  const inputs = new Set(files.map((f) => path.resolve(io.cwd, f)));
  for (const [option, file] of [['--json', o.json], ['--junit', o.junit], ['--html', o.html]] as const) {
    if (file && inputs.has(path.resolve(io.cwd, file))) throw new TanframeError('usage', `${option} ${file} would write over one of the reports to merge`);
  }
  const parts: NamedReport[] = [];
  for (const f of files) parts.push(await readReport(f, io));
  const merged = mergeReports(parts, toProcessOptions({ method: parts[0].report.method, ...parts[0].report.options }));
  let writeFailures = await writeReportFiles(merged, { junit: o.junit, html: o.html }, io, new PictureOutputs({}, io));
  if (o.json) writeFailures += await writeNamedFile('--json', o.json, JSON.stringify(merged, null, 2) + '\n', io);
  writeFailures += await emitReport(merged, { quiet: o.quiet, annotate: o.annotate }, io);
  return exitStatus(merged.files, writeFailures);
}
