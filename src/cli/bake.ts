/**
 * `tanframe bake`: compute frames and write meshes.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { Command, Option } from 'commander';
import { TanframeError } from '../mesh/errors.js';
import { displayPath, expandInputs } from '../io/inputs.js';
import type { FileJob } from '../lib/processFile.js';
import { buildReport } from '../report/json.js';
import type { FileReport } from '../report/types.js';
import { addSharedOptions, checkOutputOptions, emitReport, exitStatus, shardOf, toProcessOptions, toolVersion, type CliIo } from './shared.js';
import { runBatch } from './batch.js';
import { writeReportFiles } from './outputs.js';

function swapExtension(p: string, format: 'glb' | 'gltf' | null): string {
  const ext = path.extname(p).toLowerCase();
  const target = format ? `.${format}` : ext === '.obj' ? '.glb' : ext;
  return p.slice(0, p.length - path.extname(p).length) + target;
}

function failed(input: string, code: string, message: string): FileReport {
  return { input, output: null, status: 'failed', error: { code, message }, gates: [], primitives: [], warnings: [], notes: [], seconds: 0 };
}

/** Registers `bake` on `program`; `done` receives the exit status. */
export function registerBake(program: Command, io: CliIo, done: (code: number) => void): void {
  const cmd = program
    .command('bake')
    .description('compute tangent frames and write the meshes with a TANGENT attribute')
    .argument('<inputs...>', 'files (.glb .gltf .obj), folders (searched recursively) or glob patterns')
    .option('-o, --out <path>', 'output file (one input file) or folder (mirrors the input layout)')
    .option('--in-place', 'replace each input by an atomic rename of a complete file', false)
    .addOption(new Option('--format <format>', 'output container (default: the input\'s; GLB for OBJ)').choices(['glb', 'gltf']))
    .option('--keep-existing', 'keep stored tangents that are valid', false)
    .addOption(new Option('--normals <mode>', 'normals: keep the file\'s (missing ones are generated flat), or regenerate').choices(['keep', 'flat', 'smooth']).default('keep'))
    .option('--smooth-angle <deg>', 'crease angle for --normals smooth', (v: string) => {
      const x = Number(v);
      if (!Number.isFinite(x) || x < 0 || x > 180) throw new TanframeError('usage', `--smooth-angle: expected degrees in [0, 180], got '${v}'`);
      return x;
    }, 60)
    .addOption(new Option('--tangent-type <type>', 'TANGENT component type').choices(['float', 'snorm16', 'snorm8']).default('float'))
    .option('--dry-run', 'do everything but write the meshes', false);
  addSharedOptions(cmd);
  cmd.action(async (inputs: string[], o: Record<string, any>) => {
    done(await runBake(inputs, o, io));
  });
}

/** The `bake` command's body, callable in-process. Returns the exit status. */
export async function runBake(inputs: string[], o: Record<string, any>, io: CliIo): Promise<number> {
  const started = performance.now();
  if (o.out && o.inPlace) throw new TanframeError('usage', 'choose one of -o/--out and --in-place');
  if (!o.out && !o.inPlace && !o.dryRun) throw new TanframeError('usage', 'say where to write: -o <out> or --in-place (or --dry-run)');
  checkOutputOptions(o);
  const options = toProcessOptions(o);
  options.keepExisting = !!o.keepExisting;
  options.normals = o.normals;
  options.smoothAngle = o.smoothAngle;
  options.tangentType = o.tangentType;
  const expanded = await expandInputs(inputs, io.cwd);
  const files = shardOf(expanded.files, o.shard);
  const singleFile = inputs.length === 1 && expanded.files.length === 1 && expanded.files[0].relative === path.basename(expanded.files[0].path) &&
    fs.existsSync(path.resolve(io.cwd, inputs[0])) && fs.statSync(path.resolve(io.cwd, inputs[0])).isFile();
  const outAbs = o.out ? path.resolve(io.cwd, o.out) : null;
  const outIsFolder = outAbs !== null && (!singleFile || /[\\/]$/.test(o.out) || (fs.existsSync(outAbs) && fs.statSync(outAbs).isDirectory()));
  const reports: FileReport[] = expanded.problems.map((p) => failed(p.input, 'read-failed', p.message));
  const jobs: FileJob[] = [];
  const targets = new Map<string, string>();
  for (const f of files) {
    let output: string | null = null;
    // The output as the user would name it: -o as given, plus the mirrored relative path.
    let outputShown: string | null = null;
    if (o.inPlace) {
      if (path.extname(f.path).toLowerCase() === '.obj' || (o.format && `.${o.format}` !== path.extname(f.path).toLowerCase())) {
        reports.push(failed(f.display, 'usage', '--in-place keeps the file type; write OBJ input or another --format with -o'));
        continue;
      }
      output = f.path;
      outputShown = f.display;
    } else if (outAbs) {
      output = outIsFolder ? path.join(outAbs, swapExtension(f.relative, o.format ?? null)) : outAbs;
      outputShown = outIsFolder ? displayPath(o.out, swapExtension(f.relative, o.format ?? null)) : o.out;
      if (!outIsFolder && path.extname(outAbs) === '') {
        const ext = o.format ?? (path.extname(f.path).toLowerCase() === '.gltf' ? 'gltf' : 'glb');
        output = swapExtension(outAbs + '.x', ext);
        outputShown = swapExtension(o.out + '.x', ext);
      }
      if (path.resolve(output) === path.resolve(f.path)) {
        reports.push(failed(f.display, 'usage', 'the output would overwrite the input; use --in-place to replace it'));
        continue;
      }
      const other = targets.get(output);
      if (other) {
        reports.push(failed(f.display, 'usage', `its output ${outputShown} is also the output of ${other}`));
        continue;
      }
      targets.set(output, f.display);
    }
    const ext = output ? path.extname(output).toLowerCase() : '';
    const format = o.format ?? (ext === '.gltf' ? 'gltf' : ext === '.glb' ? 'glb' : null);
    jobs.push({
      command: 'bake', input: f.path, output, format, dryRun: !!o.dryRun,
      displayInput: f.display, displayOutput: outputShown,
    });
  }
  const batch = await runBatch(jobs, options, o, io);
  reports.push(...batch.reports);
  const seconds = (performance.now() - started) / 1000;
  const report = buildReport('bake', toolVersion(), options.method, reportOptions(o), sortReports(reports), seconds);
  await writeReportFiles(report, o, io, batch.pictures);
  await emitReport(report, o, io);
  return exitStatus(report.files);
}

/** Report files in input order (by input name), whatever order they finished in. */
export function sortReports(files: FileReport[]): FileReport[] {
  return [...files].sort((a, b) => (a.input < b.input ? -1 : a.input > b.input ? 1 : 0));
}

/** The options echoed in the report (stable keys, no paths that vary between machines). */
export function reportOptions(o: Record<string, any>): Record<string, unknown> {
  const keys = ['method', 'weight', 'uv', 'allPrimitives', 'failOn', 'maxDegenerateUv', 'tolerance', 'uvEpsilon',
    'format', 'inPlace', 'keepExisting', 'normals', 'smoothAngle', 'tangentType', 'dryRun', 'shard'];
  const out: Record<string, unknown> = {};
  for (const k of keys) if (o[k] !== undefined) out[k] = o[k];
  return out;
}
