/**
 * The state of earlier bakes into one output folder, so a rerun skips what has not changed.
 * Based on: DESIGN.md, Guarantees (`.tanframe-state.json`, `up-to-date`, `--force`); SHA-256
 * (FIPS 180-4, through node:crypto) as the content hash. Content-hashed records are common
 * practice in build caches.
 *
 * `bake -o <folder>` keeps `.tanframe-state.json` in the output folder (not when -o names one
 * output file: a folder of someone else's files gets no state). It holds one record per
 * output, keyed by the main output's path relative to that folder:
 *
 *   { "schema": "tanframe-state/1", "tool": { "name": "tanframe", "version": "..." },
 *     "records": { "crate/crate.gltf": {
 *       "input":      { "path": "<input, relative to the state folder>", "sha256": "..." },
 *       "references": [ { "path": "<relative to the input's folder>", "sha256": "..." | null } ],
 *       "options":    { ...every process option, and the requested container },
 *       "tool":       "<tool version>",
 *       "outputs":    [ { "path": "<relative to the state folder>", "sha256": "..." } ] } } }
 *
 * A job is up-to-date when its record has the same tool version and options, the input's
 * bytes hash as recorded, every referenced file (buffers, images, material libraries; absent
 * ones recorded as null) hashes as recorded, and every recorded output is on disk with its
 * recorded hash. Only the hashes are trusted: the record's paths say where to look, its input
 * path is for people. Any difference runs the file again. A file is recorded only when it
 * baked with status 'ok' and tripped no gate (options include the gates, so an up-to-date file
 * would trip none again); a file that failed or tripped a gate loses its record and runs
 * every time. Records of outputs this run did not touch are kept (other runs into the folder).
 *
 * Speed: the hashes of unchanged files come from machine-local stamps (stampCache.ts: device,
 * inode, size and times, kept in the user's cache folder, never in the portable state file), so
 * a rerun with nothing changed reads no file's bytes; a stamp that does not match, or was taken
 * too soon after the file changed, means the bytes are hashed.
 *
 * Trust: the input is hashed before the reader reads it and the outputs from the bytes
 * written, so a file edited during the run only makes the next run redo it. Referenced files
 * are hashed right after the read (a file swapped in that instant is the one gap). A state
 * file that is not valid JSON, has another schema or a malformed record is ignored with a
 * warning and replaced when the run saves; `--force` ignores it without a warning. The state
 * is written atomically after the outputs. It is never one of the run's inputs: `bake` lists
 * it in the run's write plan before any work (a run that reads it, as an input or a file an
 * input references, or plans another file at its path, is refused with exit status 2);
 * RunState checks again on its own (naming it as an input is a usage error, and when a
 * finished file turns out to reference it or to have written it, the state is not written
 * and a warning says so).
 */
import { createHash } from 'node:crypto';
import * as fsp from 'node:fs/promises';
import * as path from 'node:path';
import type { Asset } from '../mesh/asset.js';
import { TanframeError } from '../mesh/errors.js';
import { outputParts, writeFilesAtomic, type OutputFile } from '../io/files.js';
import type { FileReport } from '../report/types.js';
import { referencedFiles } from './assetFiles.js';
import { STATE_FILE_NAME, type ProcessOptions } from './options.js';
import { hashWithStamp, ownStamp, StampCache, type Stamp } from './stampCache.js';

export { STATE_FILE_NAME };

/** The state file's schema tag. */
export const STATE_SCHEMA = 'tanframe-state/1';

/** A file and the SHA-256 of its bytes (hex), null for a file that was absent. */
export interface HashedFile {
  path: string;
  sha256: string | null;
}

/** One output's record. */
export interface StateRecord {
  input: HashedFile;
  references: HashedFile[];
  options: Record<string, unknown>;
  tool: string;
  outputs: HashedFile[];
}

/** What a bake measured for the state (absolute paths): passed from the worker to the run. */
export interface RecordParts {
  input: string;
  references: HashedFile[];
  outputs: HashedFile[];
  /** Stamps of the files hashed (absolute path -> stamp), for the machine-local stamp cache. */
  stamps?: Record<string, Stamp>;
}

/** The part of a file job the state needs. */
export interface StateJob {
  input: string;
  output: string | null;
  format: 'glb' | 'gltf' | null;
  displayInput: string;
  displayOutput: string | null;
  /** Set by RunState.pending: the worker measures RecordParts for this job. */
  record?: boolean;
  /** This file's own options (config overrides), when they replace the run's. */
  options?: ProcessOptions;
  /** Gates a config waiver lets through for this file. */
  waivers?: { gate: string; reason: string }[];
}

/** Jobs whose records are checked at once (file reads overlap hashing). Our choice. */
const CHECKS_AT_ONCE = 4;

/** SHA-256 (hex) of the bytes in memory. */
export function sha256Bytes(bytes: Uint8Array): string {
  return createHash('sha256').update(bytes).digest('hex');
}

/**
 * What the worker measures for the state after a bake: the input's hash (taken before the
 * read), the hash of every file the asset references (absent ones null) and of every planned
 * output (from its bytes).
 */
export async function recordParts(inputHash: { sha256: string; stamp: Stamp | null }, asset: Asset, input: string, planned: OutputFile[], written: boolean): Promise<RecordParts> {
  const stamps: Record<string, Stamp> = {};
  if (inputHash.stamp) stamps[path.resolve(input)] = inputHash.stamp;
  const references: HashedFile[] = [];
  for (const ref of referencedFiles(asset, input)) {
    const h = await hashWithStamp(ref.path);
    references.push({ path: ref.path, sha256: h.sha256 });
    if (h.stamp) stamps[path.resolve(ref.path)] = h.stamp;
  }
  const outputs: HashedFile[] = [];
  for (const f of planned) {
    const hash = createHash('sha256');
    for (const part of outputParts(f)) hash.update(part);
    const sha256 = hash.digest('hex');
    outputs.push({ path: path.resolve(f.path), sha256 });
    const s = written ? await ownStamp(f.path, sha256) : null;
    if (s) stamps[path.resolve(f.path)] = s;
  }
  return { input: inputHash.sha256, references, outputs, stamps };
}

/** JSON with object keys sorted at every level, so equal options give equal text. */
function canonical(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(canonical).join(',')}]`;
  if (value !== null && typeof value === 'object') {
    const o = value as Record<string, unknown>;
    return `{${Object.keys(o).sort().filter((k) => o[k] !== undefined).map((k) => `${JSON.stringify(k)}:${canonical(o[k])}`).join(',')}}`;
  }
  return JSON.stringify(value ?? null);
}

function toPosix(p: string): string {
  return p.split(path.sep).join('/');
}

const HEX64 = /^[0-9a-f]{64}$/;

function isHashed(v: any, nullable: boolean): v is HashedFile {
  return v !== null && typeof v === 'object' && typeof v.path === 'string' && (HEX64.test(v.sha256) || (nullable && v.sha256 === null));
}

function isRecord(r: any): r is StateRecord {
  return r !== null && typeof r === 'object' && isHashed(r.input, false) && typeof r.tool === 'string' &&
    r.options !== null && typeof r.options === 'object' && !Array.isArray(r.options) &&
    Array.isArray(r.references) && r.references.every((x: any) => isHashed(x, true)) &&
    Array.isArray(r.outputs) && r.outputs.length > 0 && r.outputs.every((x: any) => isHashed(x, false));
}

/** Reads and checks a state file: its records, or the reason it cannot be trusted (null when absent). */
async function loadState(file: string): Promise<{ records: Map<string, StateRecord> } | { problem: string } | null> {
  let text: string;
  try {
    text = await fsp.readFile(file, 'utf8');
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') return null;
    return { problem: `cannot read it (${(err as NodeJS.ErrnoException).code ?? 'error'})` };
  }
  let json: any;
  try {
    json = JSON.parse(text);
  } catch {
    return { problem: 'it is not valid JSON' };
  }
  if (json === null || typeof json !== 'object' || json.schema !== STATE_SCHEMA) return { problem: `it is not a ${STATE_SCHEMA} file` };
  if (json.records === null || typeof json.records !== 'object' || Array.isArray(json.records)) return { problem: 'it has no records object' };
  const records = new Map<string, StateRecord>();
  for (const [key, r] of Object.entries(json.records)) {
    if (!isRecord(r)) return { problem: `its record for '${key.slice(0, 200)}' is malformed` };
    records.set(key, r);
  }
  return { records };
}

/** How a run uses the state. */
export interface StateSettings {
  /** Tool version. */
  version: string;
  /** The run's process options (all of them take part in a record's options). */
  options: ProcessOptions;
  /** --force: read no record (the state is still written). */
  force: boolean;
  /** Absolute paths of the run's inputs: the state file must not be one of them. */
  inputs: string[];
  /** Prints one warning line. */
  warn: (message: string) => void;
  /** The machine-local stamps of this state file (stampCache.ts), shared with the write plan; none by default. */
  stamps?: StampCache;
  /** False for a stamp file the run must not write (it reads it). */
  mayWriteCache?: (file: string) => boolean;
}

/**
 * The state of one output folder during one `bake -o` run: open it before the batch, let
 * `pending` report up-to-date jobs, `take` each finished job, then `save`.
 */
export class RunState {
  private readonly records: Map<string, StateRecord>;
  private blocked: string | null = null;
  private changed = false;

  private constructor(
    /** Absolute path of the state file. */
    readonly file: string,
    records: Map<string, StateRecord>,
    private readonly settings: StateSettings,
    private readonly stamps: StampCache,
  ) {
    this.records = records;
  }

  /**
   * Opens the state of `folder` (absolute). Throws TanframeError 'usage' when the state file
   * is one of the run's inputs. A state that cannot be trusted is ignored with a warning.
   */
  static async open(folder: string, settings: StateSettings): Promise<RunState> {
    const file = path.join(folder, STATE_FILE_NAME);
    const real = await realOrSelf(file);
    for (const input of settings.inputs) {
      if (input === file || (await realOrSelf(input)) === real) {
        throw new TanframeError('usage', `${input} is the state file of the output folder; it cannot be an input`);
      }
    }
    const loaded = await loadState(file);
    let records = new Map<string, StateRecord>();
    if (loaded && 'problem' in loaded) {
      settings.warn(`ignoring ${file}: ${loaded.problem}; every file runs and the state is written anew`);
    } else if (loaded) {
      records = loaded.records;
    }
    const stamps = settings.stamps ?? (await StampCache.open(null, real));
    const state = new RunState(file, records, settings, stamps);
    state.changed = loaded !== null && 'problem' in loaded;
    return state;
  }

  private get folder(): string {
    return path.dirname(this.file);
  }

  private key(job: StateJob): string {
    return toPosix(path.relative(this.folder, path.resolve(job.output!)));
  }

  private optionsOf(job: StateJob): Record<string, unknown> {
    // The file's own options (overrides) and waivers, so a config change that touches only
    // this file runs it again.
    return JSON.parse(canonical({ ...(job.options ?? this.settings.options), format: job.format, waivers: job.waivers ?? [] }));
  }

  /** True when `job`'s record matches what is on disk now (see the module doc). */
  async upToDate(job: StateJob): Promise<boolean> {
    if (this.settings.force || !job.output) return false;
    const r = this.records.get(this.key(job));
    if (!r || r.tool !== this.settings.version || canonical(r.options) !== canonical(this.optionsOf(job))) return false;
    if ((await this.stamps.sha(job.input)) !== r.input.sha256) return false;
    const inputDir = path.dirname(path.resolve(job.input));
    for (const ref of r.references) {
      const abs = path.resolve(inputDir, ...ref.path.split('/'));
      if ((await this.stamps.sha(abs)) !== ref.sha256) return false;
    }
    for (const out of r.outputs) {
      if ((await this.stamps.sha(path.resolve(this.folder, ...out.path.split('/')))) !== out.sha256) return false;
    }
    return true;
  }

  /**
   * Splits `jobs`: each up-to-date one gets an 'up-to-date' report appended to `reports`;
   * the others are returned, marked so the worker measures their record.
   */
  async pending<J extends StateJob>(jobs: J[], reports: FileReport[]): Promise<J[]> {
    // Up to CHECKS_AT_ONCE jobs are checked at once, so reading one file overlaps hashing another.
    const seconds: (number | null)[] = new Array(jobs.length).fill(null);
    let next = 0;
    const check = async () => {
      while (next < jobs.length) {
        const i = next++;
        const started = performance.now();
        if (await this.upToDate(jobs[i])) seconds[i] = (performance.now() - started) / 1000;
      }
    };
    await Promise.all(Array.from({ length: Math.min(CHECKS_AT_ONCE, jobs.length) }, check));
    const out: J[] = [];
    jobs.forEach((job, i) => {
      const s = seconds[i];
      if (s !== null) {
        reports.push({
          input: job.displayInput, output: job.displayOutput, status: 'up-to-date', error: null,
          gates: [], primitives: [], warnings: [], notes: [], seconds: s,
        });
        return;
      }
      job.record = true;
      out.push(job);
    });
    return out;
  }

  /**
   * Records a finished job: a clean bake (status 'ok', no gate) with measured parts replaces
   * its record; anything else drops it.
   */
  take(job: StateJob, report: FileReport, parts: RecordParts | undefined): void {
    if (!job.output) return;
    const key = this.key(job);
    if (report.status !== 'ok' || report.gates.length > 0 || !parts) {
      if (this.records.delete(key)) this.changed = true;
      return;
    }
    this.changed = true;
    for (const [p, st] of Object.entries(parts.stamps ?? {})) this.stamps.put(p, st);
    const touches = [...parts.references, ...parts.outputs].find((f) => path.resolve(f.path) === this.file);
    if (touches) this.blocked = `${job.displayInput} reads or writes ${touches.path}`;
    const inputDir = path.dirname(path.resolve(job.input));
    this.records.set(key, {
      input: { path: toPosix(path.relative(this.folder, path.resolve(job.input))), sha256: parts.input },
      references: parts.references.map((f) => ({ path: toPosix(path.relative(inputDir, f.path)), sha256: f.sha256 })),
      options: this.optionsOf(job),
      tool: this.settings.version,
      outputs: parts.outputs.map((f) => ({ path: toPosix(path.relative(this.folder, f.path)), sha256: f.sha256 })),
    });
  }

  /**
   * Writes the state atomically (after the outputs), records sorted by key. Never throws: a
   * state that cannot be written, or must not be (see `take`), is a warning.
   */
  async save(): Promise<void> {
    await this.stamps.save(this.settings.mayWriteCache);
    if (!this.changed) return;
    if (this.blocked) {
      this.settings.warn(`not writing ${this.file}: ${this.blocked}`);
      return;
    }
    const records: Record<string, StateRecord> = {};
    for (const key of [...this.records.keys()].sort()) records[key] = this.records.get(key)!;
    const text = JSON.stringify({ schema: STATE_SCHEMA, tool: { name: 'tanframe', version: this.settings.version }, records }, null, 2) + '\n';
    try {
      await writeFilesAtomic([{ path: this.file, bytes: new TextEncoder().encode(text) }]);
    } catch (err) {
      this.settings.warn(`${(err as Error).message}; the next run redoes every file`);
    }
  }
}

/** The real path of `p`, through its folder when it does not exist yet, else `p` resolved. */
export async function realOrSelf(p: string): Promise<string> {
  const abs = path.resolve(p);
  try {
    return await fsp.realpath(abs);
  } catch {
    try {
      return path.join(await fsp.realpath(path.dirname(abs)), path.basename(abs));
    } catch {
      return abs;
    }
  }
}
