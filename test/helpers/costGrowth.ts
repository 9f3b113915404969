/**
 * The cost property harness: does a task's time and peak memory grow at most about linearly
 * with its input? For one generator it builds the input at two sizes (x1 and x4), runs the
 * task on each in a fresh child process (so peak memory is measured per size) and compares.
 * Never a fixed time bound: only ratios between the two sizes inside one run.
 *
 * Usage (see test/cost/text.test.ts):
 *
 *   const r = await measureGrowth({
 *     name: 'OBJ line continuations',
 *     files: (scale) => ({ 'a.obj': continuedObj(1000 * scale) }), // the input at x1 and x4
 *     task: costTask('cliJson', 'audit', 'a.obj'),                 // what to run on it
 *   });
 *   expectBoundedGrowth(r); // time and memory within 2x of linear, or refused with a code
 *
 *   await checkGrowth(case, opts); // the same in one call, measuring once more before failing
 *
 * - `files(scale)` returns the files of one size (name -> bytes or text), written into a fresh
 *   folder; the task runs with that folder as its first argument. `scale` may be fractional
 *   (the warm-up input is scale 1/8): round counts up.
 * - `task` names an exported function of a module: `{ module: URL or path, export, args }`.
 *   It is called as `fn(folder, ...args)` in the child. A .ts module loads through the test's
 *   TypeScript hooks (a few seconds per child); .mjs / .js modules load directly.
 *   `costTask(name, ...args)` names one of the ready tasks of test/helpers/costTasks.mjs, which
 *   run the built library in dist/ (`npm test` builds first; build before running one file):
 *   'cliJson' (runs the CLI in-process; a failed file counts as refused with its report code),
 *   'readAsset', 'auditFile', 'decodePngFile', 'convertMapFiles'. A task refuses by throwing a
 *   TanframeError (any code but 'internal') or by returning `{ refused: code }`.
 * - Each size runs `runs` times (default 3) and the smallest time and memory are kept (the
 *   machine may be shared). Before the timed run the child warms up on an input of an eighth
 *   of x1, so the JIT's first compile is not charged to the small size.
 * - Memory is the growth of peak resident memory over the child's resident memory just before
 *   the timed run. Below `memoryFloor` bytes (default 16 MiB) growth counts as `memoryFloor`:
 *   heap growth comes in steps of a few MB, so smaller x1 figures are noise. Choose sizes whose
 *   x1 run uses more than that when memory is the point.
 * - `COST_SCALE` (environment) multiplies every scale (`npm run fuzz` sets 4): the same checks
 *   at larger sizes.
 */
import { spawn } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { expect } from 'vitest';

/** A function to run in the child: `module`'s export `export`, called as fn(folder, ...args). */
export interface CostTask {
  module: string | URL;
  export: string;
  args?: unknown[];
}

/** One growth check. */
export interface GrowthCase {
  /** Shown in messages. */
  name: string;
  /** Files of the input at `scale` (1 and 4, times COST_SCALE): name -> bytes or text. */
  files: (scale: number) => Record<string, Uint8Array | string>;
  task: CostTask;
  /** Size ratio of the two runs (default 4). */
  ratio?: number;
  /** Runs per size, best kept (default 3). */
  runs?: number;
  /** Memory growth below this counts as this much (bytes; default 16 MiB). */
  memoryFloor?: number;
}

/** What one size cost. */
export interface SizeCost {
  scale: number;
  /** Bytes of the input files. */
  bytes: number;
  /** Best time of the timed runs, ms. */
  ms: number;
  /** Smallest peak-RSS growth over the runs, bytes. */
  memory: number;
  /** Stable error code when the task refused the input, else null. */
  refused: string | null;
  detail: string | null;
}

/** Both sizes of one check. */
export interface GrowthResult {
  name: string;
  ratio: number;
  memoryFloor: number;
  small: SizeCost;
  large: SizeCost;
}

const here = path.dirname(fileURLToPath(import.meta.url));
const CHILD = path.join(here, 'costChild.mjs');

/** The scale multiplier from COST_SCALE (default 1). */
export function costScale(): number {
  const s = Number(process.env.COST_SCALE ?? 1);
  return Number.isFinite(s) && s >= 1 ? s : 1;
}

/** A ready task of test/helpers/costTasks.ts by name. */
export function costTask(name: string, ...args: unknown[]): CostTask {
  return { module: new URL('./costTasks.mjs', import.meta.url), export: name, args };
}

function writeFiles(dir: string, files: Record<string, Uint8Array | string>): number {
  fs.mkdirSync(dir, { recursive: true });
  let bytes = 0;
  for (const [name, data] of Object.entries(files)) {
    const p = path.join(dir, name);
    fs.mkdirSync(path.dirname(p), { recursive: true });
    fs.writeFileSync(p, data);
    bytes += typeof data === 'string' ? Buffer.byteLength(data) : data.byteLength;
  }
  return bytes;
}

interface ChildResult { ms: number; baseRss: number; peakRss: number; refused?: string | null; detail?: string | null; error?: string }

function runChild(task: CostTask, dir: string, warmupDir: string | null): Promise<ChildResult> {
  const moduleUrl = task.module instanceof URL ? task.module.href
    : task.module.startsWith('file:') ? task.module : pathToFileURL(path.resolve(task.module)).href;
  const spec = JSON.stringify({ module: moduleUrl, export: task.export, args: task.args ?? [], dir, warmupDir });
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ['--expose-gc', '--no-warnings', CHILD, spec], { stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '', err = '';
    child.stdout.on('data', (d) => { out += d; if (out.length > 1 << 20) out = out.slice(-65536); });
    child.stderr.on('data', (d) => { err += d; if (err.length > 1 << 20) err = err.slice(-65536); });
    child.on('error', reject);
    child.on('close', (code) => {
      const m = /^COST-RESULT (.*)$/m.exec(out);
      if (!m) return reject(new Error(`cost child for ${dir} exited ${code} without a result: ${err.slice(-2000)}`));
      resolve(JSON.parse(m[1]) as ChildResult);
    });
  });
}

/** Builds both sizes, runs the task on each in child processes and returns what each cost. */
export async function measureGrowth(c: GrowthCase): Promise<GrowthResult> {
  const ratio = c.ratio ?? 4;
  const runs = c.runs ?? 3;
  const k = costScale();
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-cost-'));
  try {
    const smallDir = path.join(root, 'x1');
    const largeDir = path.join(root, `x${ratio}`);
    const warmDir = path.join(root, 'warm-up');
    writeFiles(warmDir, c.files(k / 8));
    const smallBytes = writeFiles(smallDir, c.files(k));
    const largeBytes = writeFiles(largeDir, c.files(k * ratio));
    const sizes: SizeCost[] = [];
    for (const [scale, dir, bytes] of [[k, smallDir, smallBytes], [k * ratio, largeDir, largeBytes]] as const) {
      let ms = Infinity, memory = Infinity, refused: string | null = null, detail: string | null = null;
      for (let i = 0; i < runs; i++) {
        const r = await runChild(c.task, dir, warmDir);
        if (r.error) throw new Error(`${c.name} (x${scale}): the task failed: ${r.error}`);
        ms = Math.min(ms, r.ms);
        memory = Math.min(memory, Math.max(0, r.peakRss - r.baseRss));
        refused = r.refused ?? null;
        detail = r.detail ?? null;
      }
      sizes.push({ scale, bytes, ms, memory, refused, detail });
    }
    const result = { name: c.name, ratio, memoryFloor: c.memoryFloor ?? 16 * 1024 * 1024, small: sizes[0], large: sizes[1] };
    console.log(describeGrowth(result));
    return result;
  } finally {
    fs.rmSync(root, { recursive: true, force: true });
  }
}

/** One line describing a result, for test output and reports. */
export function describeGrowth(r: GrowthResult): string {
  const mb = (b: number) => `${(b / 1048576).toFixed(1)} MB`;
  const one = (s: SizeCost) => `x${s.scale}: ${s.bytes} B, ${s.ms.toFixed(1)} ms, +${mb(s.memory)}${s.refused ? `, refused '${s.refused}'` : ''}`;
  return `${r.name}: ${one(r.small)}; ${one(r.large)}`;
}

/**
 * Asserts bounded growth: the larger input is refused with a stable code, or both were
 * processed and time and memory grew by at most `factor` (default 2) times the size ratio
 * (times the byte ratio when the generator's bytes grew faster than its scale). `allowRefusal`
 * (default true) accepts a refusal of the larger size; `mustRefuse` requires one, with that code.
 */
export function expectBoundedGrowth(
  r: GrowthResult,
  opts: { factor?: number; allowRefusal?: boolean; mustRefuse?: string } = {},
): void {
  const factor = opts.factor ?? 2;
  const text = describeGrowth(r);
  if (opts.mustRefuse) {
    expect(r.large.refused, text).toBe(opts.mustRefuse);
    return;
  }
  if (r.large.refused) {
    expect(opts.allowRefusal ?? true, `${text}: refused`).toBe(true);
    return;
  }
  expect(r.small.refused, text).toBeNull();
  const sizeRatio = Math.max(r.ratio, r.large.bytes / Math.max(1, r.small.bytes));
  const bound = factor * sizeRatio;
  expect(r.large.ms / Math.max(r.small.ms, 1e-3), `${text}: time ratio above ${bound.toFixed(1)}`).toBeLessThanOrEqual(bound);
  const m1 = Math.max(r.small.memory, r.memoryFloor), m4 = Math.max(r.large.memory, r.memoryFloor);
  expect(m4 / m1, `${text}: memory ratio above ${bound.toFixed(1)}`).toBeLessThanOrEqual(bound);
}

/** Whether `r` passes expectBoundedGrowth with `opts` (no assertion). */
function withinBounds(r: GrowthResult, opts: Parameters<typeof expectBoundedGrowth>[1]): boolean {
  try {
    expectBoundedGrowth(r, opts);
    return true;
  } catch {
    return false;
  }
}

/**
 * measureGrowth then expectBoundedGrowth; a result out of bounds is measured once more and
 * only the second measurement counts (on a shared machine another process can slow one size
 * down; a structure that really grows too fast fails both times). Returns the result used.
 */
export async function checkGrowth(
  c: GrowthCase,
  opts: Parameters<typeof expectBoundedGrowth>[1] = {},
): Promise<GrowthResult> {
  let r = await measureGrowth(c);
  if (!withinBounds(r, opts)) {
    console.log(`${c.name}: out of bounds, measuring again`);
    r = await measureGrowth(c);
  }
  expectBoundedGrowth(r, opts);
  return r;
}
