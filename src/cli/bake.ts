/**
 * `tanframe bake`: compute frames and write meshes.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { TanframeError } from '../mesh/errors.js';
import { displayPath, expandInputs } from '../io/inputs.js';
import type { FileJob } from '../lib/processFile.js';
import { buildReport } from '../report/json.js';
import type { FileReport } from '../report/types.js';
import type { InputFile } from '../io/inputs.js';
import { containerOf, outputRelativeName, outputTarget } from '../lib/outputNames.js';
import { planRun, type PlannedMesh } from '../lib/writePlan.js';
import { namedExplicitly, perFile, resolveSettings } from './config.js';
import { checkOutputOptions, emitReport, exitStatus, shardOf, toolVersion, type CliIo } from './shared.js';
import { cacheFolder, StampCache } from '../lib/stampCache.js';
import { realOrSelf, RunState } from '../lib/runState.js';
import { STATE_FILE_NAME, type ProcessOptions } from '../lib/options.js';
import { runBatch } from './batch.js';
import { namedWrites, writeReportFiles } from './outputs.js';

/**
 * The output as reports show it, named the way the user named things: the input's own name
 * for --in-place, -o as given for one output file, else -o as given plus the mirrored path.
 */
function shownOutput(f: InputFile, m: PlannedMesh, o: Record<string, any>): string | null {
  if (!m.output) return null;
  if (m.inPlace) return f.display;
  if (m.named) return o.out;
  return displayPath(o.out, outputRelativeName(f.relative, o.format ?? null));
}

function failed(input: string, code: string, message: string): FileReport {
  return { input, output: null, status: 'failed', error: { code, message }, gates: [], primitives: [], warnings: [], notes: [], seconds: 0 };
}

/** The `bake` command's body, callable in-process. Returns the exit status. */
export async function runBake(inputs: string[], given: Record<string, any>, io: CliIo): Promise<number> {
  const started = performance.now();
  if (given.out && given.inPlace) throw new TanframeError('usage', 'choose one of -o/--out and --in-place');
  if (!given.out && !given.inPlace && !given.dryRun) throw new TanframeError('usage', 'say where to write: -o <out> or --in-place (or --dry-run)');
  const settings = resolveSettings(given, io.cwd);
  const { options, o } = settings;
  checkOutputOptions(o);
  const bakeOnly = (p: ProcessOptions) => {
    p.keepExisting = !!o.keepExisting;
    p.normals = o.normals;
    p.smoothAngle = o.smoothAngle;
    // Without --tangent-type TANGENT is float, or with --compression keep the type of a quantized NORMAL.
    p.tangentType = o.tangentType ?? 'float';
    p.tangentTypeFromInput = o.tangentType === undefined;
    p.compression = o.compression;
  };
  bakeOnly(options);
  const expanded = await expandInputs(inputs, io.cwd, { exclude: o.exclude, skipFolders: o.out ? [o.out] : [] });
  expanded.files = expanded.files.filter((f) => !(settings.excluded(f.path) && !namedExplicitly(inputs, f.path, io.cwd)));
  const files = shardOf(expanded.files, o.shard);
  // One input named as a file (one that does not exist fails as unreadable, not as a usage error).
  const first = inputs.length === 1 ? fs.statSync(path.resolve(io.cwd, inputs[0]), { throwIfNoEntry: false }) : undefined;
  const singleFile = inputs.length === 1 && (first ? first.isFile() : !/[*?[\]{}]/.test(inputs[0]));
  const target = o.out ? outputTarget(o.out, io.cwd, singleFile, o.format ?? null) : null;
  const reports: FileReport[] = expanded.problems.map((p) => failed(p.input, 'read-failed', p.message));
  const meshes: PlannedMesh[] = [];
  const planned: InputFile[] = [];
  for (const f of files) {
    if (o.inPlace) {
      if (path.extname(f.path).toLowerCase() === '.obj') {
        reports.push(failed(f.display, 'usage', '--in-place cannot store tangents in an OBJ file; bake it with -o to a .glb'));
        continue;
      }
      if (o.format && `.${o.format}` !== path.extname(f.path).toLowerCase()) {
        reports.push(failed(f.display, 'usage', `--in-place keeps the file type; write --format ${o.format} with -o`));
        continue;
      }
      meshes.push({ input: f.path, output: f.path, inPlace: true, format: containerOf(f.path), named: true, root: path.dirname(f.path) });
    } else if (target) {
      const output = target.kind === 'file' ? target.path : path.join(target.path, outputRelativeName(f.relative, o.format ?? null));
      const root = target.kind === 'file' ? path.dirname(target.path) : target.path;
      meshes.push({ input: f.path, output, inPlace: false, format: target.kind === 'file' ? target.format : containerOf(output), named: target.kind === 'file', root });
    } else {
      meshes.push({ input: f.path, output: '', inPlace: false, format: 'glb', named: false, root: '' });
    }
    planned.push(f);
  }
  const writing = meshes.filter((m) => m.output !== '');
  const stateFolder = target && target.kind === 'folder' && !o.dryRun ? target.path : null;
  // The stamps of earlier runs into this folder (stampCache.ts) spare the plan and the state check reading unchanged files.
  const stamps = stateFolder ? await StampCache.open(cacheFolder(io.env), await realOrSelf(path.join(stateFolder, STATE_FILE_NAME)), !o.force) : null;
  const run = await planRun({
    cwd: io.cwd, inputs: expanded.files.map((f) => f.path), meshes: writing, ...namedWrites(o, io), hash: stamps ? (f) => stamps.sha(f) : undefined,
  });
  const jobs: FileJob[] = [];
  let w = 0;
  for (let i = 0; i < planned.length; i++) {
    const f = planned[i];
    const m = meshes[i];
    const writes = m.output !== '' ? run.jobs[w++] : null;
    if (writes && 'refused' in writes) {
      reports.push(failed(f.display, 'usage', writes.refused));
      continue;
    }
    const own = perFile(settings, f.path);
    if (own.options) bakeOnly(own.options);
    jobs.push({
      command: 'bake', input: f.path, output: m.output || null, format: m.output ? m.format : null, dryRun: !!o.dryRun,
      displayInput: f.display, displayOutput: shownOutput(f, m, o), writes: writes ?? undefined,
      ...own,
    });
  }
  if (stateFolder) run.plan.write(path.join(stateFolder, STATE_FILE_NAME), `the state file ${run.plan.shown(path.join(stateFolder, STATE_FILE_NAME))}`);
  const state = stateFolder ? await RunState.open(stateFolder, {
    version: toolVersion(), options, force: !!o.force, inputs: files.map((f) => f.path), warn: (m) => io.stderr(`tanframe: warning: ${m}\n`),
    stamps: stamps ?? undefined, mayWriteCache: (f) => run.plan.readers(run.plan.key(f)).size === 0,
  }) : null;
  const pending = state ? await state.pending(jobs, reports) : jobs;
  const batch = await runBatch(pending, options, o, io, run.plan, state ? (i, outcome) => state.take(pending[i], outcome.report, outcome.record) : undefined);
  for (const r of batch.reports) reports.push(r); // no spread: a batch may hold any number of files
  await state?.save();
  const seconds = (performance.now() - started) / 1000;
  const report = buildReport('bake', toolVersion(), options.method, reportOptions(o), sortReports(reports), seconds);
  const writeFailures = batch.writeFailures + (await writeReportFiles(report, o, io, batch.pictures, run.files)) + (await emitReport(report, o, io, run.files));
  return exitStatus(report.files, writeFailures);
}

/** Report files in input order (by input name), whatever order they finished in. */
export function sortReports(files: FileReport[]): FileReport[] {
  return [...files].sort((a, b) => (a.input < b.input ? -1 : a.input > b.input ? 1 : 0));
}

/** The options echoed in the report (stable keys, no paths that vary between machines). */
export function reportOptions(o: Record<string, any>): Record<string, unknown> {
  const keys = ['method', 'weight', 'uv', 'allPrimitives', 'failOn', 'limits', 'maxDegenerateUv', 'tolerance', 'uvEpsilon',
    'format', 'inPlace', 'keepExisting', 'normals', 'smoothAngle', 'tangentType', 'compression', 'dryRun', 'shard'];
  const out: Record<string, unknown> = {};
  for (const k of keys) if (o[k] !== undefined) out[k] = o[k];
  return out;
}
