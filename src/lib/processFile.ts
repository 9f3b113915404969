/**
 * One file, start to finish: read, solve, diagnose, (bake only) encode and write atomically.
 * Every failure becomes a `failed` file report with a stable code; nothing is written for a
 * file that fails.
 */
import { stat } from 'node:fs/promises';
import * as path from 'node:path';
import { createContext, Script, type Context } from 'node:vm';
import type { Asset } from '../mesh/asset.js';
import { Arena, threadArena } from '../mesh/arena.js';
import { assert, TanframeError } from '../mesh/errors.js';
import { outputLength, writeFilesAtomic, type OutputFile } from '../io/files.js';
import { readGltf, readGltfBytes } from '../io/gltfRead.js';
import { encodeGltfParts, isBufferFileOf } from '../io/gltfWrite.js';
import type { ReadLimits } from '../io/limits.js';
import { capWarnings, quoteText } from '../mesh/text.js';
import { readObj, readObjBytes } from '../io/objRead.js';
import { memoryResources, type AssetResources } from '../io/resources.js';
import type { FileReport } from '../report/types.js';
import type { UvPicture } from '../report/uvPicture.js';
import { hasFindings } from './pictures.js';
import type { ViewSheet, ViewWants } from './viewSheets.js';
import type { JpegDecode } from './pictureBackground.js';
import { referencedFiles, unchangedOutputs } from './assetFiles.js';
import { planCompression, type PrimitiveCompression } from './compression.js';
import { recordParts, type RecordParts } from './runState.js';
import { hashWithStamp } from './stampCache.js';
import { solveAsset } from './bakeAsset.js';
import { guardOutputs } from './outputGuard.js';
import { gateFigures, wasChecked } from './gates.js';
import type { ProcessOptions } from './options.js';
import type { JobWrites } from './writePlan.js';

/** What to do with one file. */
export interface FileJob {
  command: 'bake' | 'audit';
  /** Absolute input path. */
  input: string;
  /** Absolute output path (bake), or null (audit, dry run). */
  output: string | null;
  /** Output container; null keeps the input's (GLB for OBJ). */
  format: 'glb' | 'gltf' | null;
  dryRun: boolean;
  /** How the report names the input and output (paths as the user gave them). */
  displayInput: string;
  displayOutput: string | null;
  /** Also return UV picture data for primitives with findings (--uv-maps, --html). */
  pictures?: boolean;
  /** Also render view sheets when the file has findings (--views; the page's copy with --html too). */
  views?: ViewWants;
  /** This file's own options (config overrides), replacing the batch's; absent: the batch's. */
  options?: ProcessOptions;
  /** Gates a config waiver lets through for this file, each with its reason. */
  waivers?: { gate: string; reason: string }[];
  /** What the run's write plan settled for this job (bake): where it writes, image names, buffers to remove. */
  writes?: JobWrites;
  /** Also measure what the run's state records (RecordParts) for this bake. */
  record?: boolean;
}

/** A file's report and, when the job asked for them, its UV pictures (never in the JSON report). */
export interface FileOutcome {
  report: FileReport;
  pictures: UvPicture[];
  /** The file's view sheets, when the job asked for them and the file has findings. */
  views?: ViewSheet | null;
  /** What the state records, when the job asked for it and the bake wrote its outputs. */
  record?: RecordParts;
}

/**
 * Sets a processed file's status, gates, gate figures and waived gates: the file is
 * 'unchecked' when gates were asked for and none of its primitives could be checked (or it has
 * none); each asked-for gate is judged against its limit (gateFigures); a tripped gate that a
 * waiver names is let through and listed under `waived` with the waiver's reason.
 */
export function applyGates(report: FileReport, options: ProcessOptions, waivers: { gate: string; reason: string }[]): void {
  const unchecked = options.failOn.length > 0 && !report.primitives.some(wasChecked);
  if (unchecked) report.status = 'unchecked';
  const figures = gateFigures(report.primitives, options, unchecked);
  report.gates = [];
  report.waived = [];
  for (const f of figures) {
    if (!f.tripped) continue;
    const waiver = waivers.find((w) => w.gate === f.gate);
    if (waiver) report.waived.push({ gate: f.gate, reason: waiver.reason });
    else report.gates.push(f.gate);
  }
  report.gateFigures = figures;
}

/** Reads any supported mesh file by its extension, within `limits` (default limits when omitted). */
export async function readAsset(file: string, limits: ReadLimits = {}): Promise<Asset> {
  assert(typeof file === 'string' && file.length > 0, 'readAsset: file must be a path');
  const ext = path.extname(file).toLowerCase();
  if (ext === '.glb' || ext === '.gltf') return readGltf(file, limits);
  if (ext === '.obj') return readObj(file, limits);
  throw new TanframeError('unsupported-format', `unsupported file type '${ext || '(none)'}' (expected .glb, .gltf or .obj)`);
}

/**
 * Reads an asset from memory the same way readAsset reads it from disk: `bytes` are the
 * file's contents and `name` its file name (its extension picks the reader; a relative path
 * gives the folder URIs are relative to). `resources` holds the files it names by URI: a
 * .gltf's buffers and images, an OBJ's material libraries and textures (a missing buffer fails
 * with 'missing-resource', a missing image or .mtl is a warning, as on disk). Nothing touches
 * the file system. Throws what readAsset throws, and 'invalid-argument' for arguments of the
 * wrong type.
 */
export async function readAssetBytes(bytes: Uint8Array, name: string, resources?: AssetResources, limits: ReadLimits = {}): Promise<Asset> {
  assert(bytes instanceof Uint8Array, 'readAssetBytes: bytes must be a Uint8Array');
  assert(typeof name === 'string' && name.length > 0, 'readAssetBytes: name must be a file name');
  const source = memoryResources(resources);
  const ext = path.extname(name).toLowerCase();
  if (ext === '.glb' || ext === '.gltf') return readGltfBytes(bytes, name, limits, source);
  if (ext === '.obj') return readObjBytes(bytes, name, limits, source);
  throw new TanframeError('unsupported-format', `unsupported file type '${ext || '(none)'}' (expected .glb, .gltf or .obj)`);
}

/** The output container for an asset: the requested one, else the input's, GLB for OBJ. */
export function outputFormat(container: Asset['container'], requested: 'glb' | 'gltf' | null): 'glb' | 'gltf' {
  if (requested) return requested;
  return container === 'gltf' ? 'gltf' : 'glb';
}

/** Turns any thrown value into a report error with a one-line message. */
export function toReportError(err: unknown): { code: string; message: string } {
  // Inside a run a broken contract is our own bug: reported as 'internal'.
  if (err instanceof TanframeError) return { code: err.code === 'invalid-argument' ? 'internal' : err.code, message: oneLine(err.message) };
  const message = err instanceof Error ? err.message : String(err);
  return { code: 'internal', message: oneLine(message) };
}

/**
 * Longest error message reported: a reason may quote a value from the file, and a hostile
 * file can hold megabytes in one JSON string. Room for a long path and the reason. Our choice.
 */
const MAX_MESSAGE_LENGTH = 1000;

/** One line of at most MAX_MESSAGE_LENGTH characters, control characters as visible escapes (cleanText). */
function oneLine(s: string): string {
  const line = s.length > MAX_MESSAGE_LENGTH * 4 ? s.slice(0, MAX_MESSAGE_LENGTH * 4) : s;
  return quoteText(line.replace(/\s*[\r\n]+\s*/g, ' ').trim(), MAX_MESSAGE_LENGTH);
}

/** Extension names of the kinds of compression. */
const EXTENSION_OF: Record<string, string> = { draco: 'KHR_draco_mesh_compression', meshopt: 'EXT_meshopt_compression' };

/**
 * The notes a bake adds about compression: what was decoded and written plain (with
 * --compression none, saying so), and what the output compresses that the input did not.
 */
function compressionNotes(asset: Asset, primitives: PrimitiveCompression[], mode: string): string[] {
  const notes: string[] = [];
  const outKinds = new Set(primitives.map((c) => c.out));
  for (const ext of asset.decompressed ?? []) {
    const kind = ext === 'KHR_draco_mesh_compression' ? 'draco' : 'meshopt';
    if (mode === 'none') notes.push(`decompressed ${ext} (written uncompressed: --compression none)`);
    else if (!outKinds.has(kind)) notes.push(mode === 'keep' ? `decompressed ${ext} (written uncompressed)` : `decompressed ${ext}`);
  }
  const inKinds = new Set(primitives.map((c) => c.in));
  for (const kind of ['draco', 'meshopt']) {
    if (outKinds.has(kind as PrimitiveCompression['out']) && !inKinds.has(kind as PrimitiveCompression['in'])) notes.push(`baked primitives compressed with ${EXTENSION_OF[kind]} (--compression ${mode})`);
  }
  return notes;
}

/** Bytes of the input file and the external buffer files it names (present on disk). */
async function inputGeometryBytes(asset: Asset, input: string): Promise<number> {
  let total = (await stat(input)).size;
  for (const ref of referencedFiles(asset, input)) {
    if (ref.kind !== 'buffer') continue;
    total += await stat(ref.path).then((s) => s.size, () => 0);
  }
  return total;
}

/** Bytes of the output file and its buffer files (.bin) among the files planned. */
function outputGeometryBytes(files: OutputFile[], out: string): number {
  let total = 0;
  for (const f of files) if (path.resolve(f.path) === path.resolve(out) || f.path.toLowerCase().endsWith('.bin')) total += outputLength(f);
  return total;
}

/**
 * Processes one file and returns its report (never throws for bad input; programming errors
 * surface as code 'internal').
 */
export async function processFile(job: FileJob, options: ProcessOptions): Promise<FileReport> {
  return (await processFileOutcome(job, options)).report;
}

/** The message of a file stopped by --file-timeout after `timeoutMs`. */
export function timeoutMessage(timeoutMs: number): string {
  return `stopped after ${timeoutMs / 1000} s (--file-timeout)`;
}

/** The one script the guarded stages run through: it calls the function its context holds. */
let guardScript: Script | null = null;
/** Its context, made once per thread; `holder.run` is the stage being run. */
let guardContext: Context | null = null;

/**
 * A file's time limit on the thread that runs it (processFileOutcome with a timeout). Stages
 * whose cost depends on the geometry (solve and diagnostics, encoding) run through `run`, as a
 * script with V8's execution timeout set to the time left: past the deadline V8 stops them
 * where they are (the same as terminating a worker thread) and they fail with 'timeout'.
 * `check` fails at once when the deadline has passed (between stages, after reading), and
 * `stopped` tells the writer not to rename anything into place any more.
 */
class FileGuard {
  stopped = false;
  constructor(private readonly deadline: number, readonly timeoutMs: number) {}

  /** Throws 'timeout' when the deadline has passed. */
  check(): void {
    if (this.stopped || performance.now() >= this.deadline) this.stop();
  }

  /** Marks the file stopped and throws 'timeout'. */
  stop(): never {
    this.stopped = true;
    throw new TanframeError('timeout', timeoutMessage(this.timeoutMs));
  }

  /** Runs `fn` (synchronous), stopped by V8 at the deadline. */
  run<T>(fn: () => T): T {
    this.check();
    guardScript ??= new Script('holder.run()');
    guardContext ??= createContext({ holder: { run: null } });
    const holder = (guardContext as { holder: { run: (() => T) | null } }).holder;
    holder.run = fn;
    try {
      return guardScript.runInContext(guardContext, { timeout: Math.max(1, Math.ceil(this.deadline - performance.now())) }) as T;
    } catch (err) {
      if ((err as NodeJS.ErrnoException)?.code !== 'ERR_SCRIPT_EXECUTION_TIMEOUT') throw err;
      // Stopped mid-stage: the scratch it held may be half-written, so none of it is kept.
      threadArena().trim(0);
      return this.stop();
    } finally {
      holder.run = null;
    }
  }
}

/** Longest timeout setTimeout and V8's script timeout take (about 24 days); beyond it, no limit. */
const MAX_TIMEOUT_MS = 0x7fffffff;

/**
 * Processes one file and returns its report and, when `job.pictures` is set, the UV picture
 * data of its primitives with findings (none for a failed file). Never throws for bad input.
 *
 * With `timeoutMs` > 0 the file has that long on this thread (a single input with
 * --file-timeout, run without a worker thread): solving, diagnostics and encoding are stopped
 * by V8 at the deadline, the deadline is checked between the other stages, and when it passes
 * while the file waits on reading or writing, the outcome is 'timeout' at once and the write
 * renames nothing into place (its temporary files are removed). A stopped file fails with code
 * 'timeout', `seconds` the limit, as a worker thread stopped by the pool does.
 */
export async function processFileOutcome(job: FileJob, batchOptions: ProcessOptions, timeoutMs = 0): Promise<FileOutcome> {
  if (!(timeoutMs > 0 && timeoutMs <= MAX_TIMEOUT_MS)) return runJob(job, batchOptions, null);
  const guard = new FileGuard(performance.now() + timeoutMs, timeoutMs);
  let timer: NodeJS.Timeout | null = null;
  const expired = new Promise<null>((resolve) => {
    timer = setTimeout(() => {
      guard.stopped = true;
      resolve(null);
    }, timeoutMs);
  });
  const outcome = await Promise.race([runJob(job, batchOptions, guard), expired]);
  if (timer) clearTimeout(timer);
  if (outcome && outcome.report.error?.code !== 'timeout') return outcome;
  return {
    report: {
      input: job.displayInput, output: null, status: 'failed', error: { code: 'timeout', message: timeoutMessage(timeoutMs) },
      gates: [], primitives: [], warnings: [], notes: [], seconds: timeoutMs / 1000,
    },
    pictures: [],
  };
}

/** processFileOutcome's body; with `guard`, under its time limit. */
async function runJob(job: FileJob, batchOptions: ProcessOptions, guard: FileGuard | null): Promise<FileOutcome> {
  const bounded = <T>(fn: () => T): T => (guard ? guard.run(fn) : fn());
  const started = performance.now();
  const options = job.options ?? batchOptions;
  const report: FileReport = {
    input: job.displayInput,
    output: null,
    status: 'ok',
    error: null,
    gates: [],
    primitives: [],
    warnings: [],
    notes: [],
    seconds: 0,
  };
  let pictures: UvPicture[] = [];
  let views: ViewSheet | null = null;
  let record: RecordParts | undefined;
  try {
    const inputHash = job.record && job.output && !job.dryRun ? await hashWithStamp(job.input) : null;
    const asset = await readAsset(job.input, { maxTriangles: options.maxTriangles });
    guard?.check();
    report.warnings = capWarnings(asset.warnings).map((w) => quoteText(w, MAX_MESSAGE_LENGTH));
    if (job.command === 'audit') for (const ext of asset.decompressed ?? []) report.notes.push(`decompressed ${ext}`);
    const solved = bounded(() => solveAsset(asset, options, !!job.pictures));
    // The scratch of ordinary primitives stays for the next file; a huge one's is let go
    // before encoding, so it does not add to the file's peak.
    threadArena().trim(Arena.KEEP_BYTES);
    report.primitives = solved.primitives;
    pictures = solved.pictures;
    for (const p of pictures) p.input = job.displayInput;
    if (pictures.length > 0) {
      // The normal maps behind the pictures: PNG and JPEG decoders load only when there are pictures.
      const { attachBackgrounds } = await import('./pictureBackground.js');
      const jpeg = (await import('jpeg-js')).default.decode as unknown as JpegDecode;
      attachBackgrounds(asset, pictures, jpeg);
    }
    applyGates(report, options, job.waivers ?? []);
    if (job.views && (job.views.sheet || job.views.page) && report.primitives.some((p) => p.action !== 'skipped' && hasFindings(p))) {
      try {
        // The renderer loads only when a file has sheets to draw.
        const { renderViewSheets } = await import('./viewSheets.js');
        views = await renderViewSheets(asset, options, job.views);
      } catch (err) {
        // A sheet that cannot be drawn is told beside the others; the file's report stands.
        views = { input: '', sheet: null, page: null, notes: [`view sheet could not be drawn: ${String((err as Error)?.message ?? err).split('\n')[0]}`], pageOmitted: 'could not be drawn' };
      }
      views.input = job.displayInput;
    }
    if (job.command === 'bake' && job.output) {
      const format = outputFormat(asset.container, job.format);
      const w = job.writes;
      const out = w?.output ?? job.output;
      // A copy keeps the input's image URIs: when the plan renamed one, the file is encoded.
      const renamed = Object.keys(w?.imageUris ?? {}).length > 0;
      const unchanged = await unchangedOutputs(asset, job.input, out, format, solved.replacements.size > 0 || renamed, w?.files);
      const mode = options.compression ?? 'keep';
      const plan = await planCompression(asset, unchanged ? new Map() : solved.replacements, unchanged ? 'keep' : mode, options.tangentTypeFromInput !== false);
      plan.primitives.forEach((c, i) => { if (report.primitives[i]) report.primitives[i].compression = c; });
      if (unchanged) report.notes = [unchanged.length === 0 ? 'nothing to bake: left as it was' : 'nothing to bake: written as the input\'s bytes'];
      else report.notes.push(...compressionNotes(asset, plan.primitives, mode));
      guard?.check();
      const planned = unchanged ?? bounded(() => encodeGltfParts(asset, solved.replacements, {
        format, outPath: out, imageUris: w?.imageUris, embedBuffers: w?.embedBuffers && asset.container === 'gltf', compression: plan.write,
      }));
      report.bytesIn = await inputGeometryBytes(asset, job.input);
      report.bytesOut = unchanged && unchanged.length === 0 ? report.bytesIn : outputGeometryBytes(planned, out);
      const files = await guardOutputs(planned, out, job.input, asset, w);
      guard?.check();
      // In place with nothing to bake, nothing is written (and nothing the file names is removed).
      if (!job.dryRun && !(unchanged && unchanged.length === 0)) {
        await writeFilesAtomic(files, {
          main: out,
          removeAfter: w?.removeAfter,
          leftovers: format === 'gltf' ? { match: (name) => isBufferFileOf(out, name), keep: w?.keep ?? [] } : undefined,
          stopped: guard ? () => guard.stopped : undefined,
        });
        report.notes.push(...(w?.notes ?? []));
      }
      if (inputHash?.sha256) record = await recordParts({ sha256: inputHash.sha256, stamp: inputHash.stamp }, asset, job.input, planned, !job.dryRun);
      report.output = job.dryRun ? null : job.displayOutput;
    }
  } catch (err) {
    report.status = 'failed';
    report.error = toReportError(err);
    report.primitives = [];
    report.gates = [];
    report.gateFigures = [];
    report.waived = [];
    report.notes = [];
    pictures = [];
    views = null;
    record = undefined;
  }
  report.seconds = (performance.now() - started) / 1000;
  const outcome: FileOutcome = { report, pictures };
  if (views) outcome.views = views;
  if (record) outcome.record = record;
  return outcome;
}
