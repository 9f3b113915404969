/**
 * Cost growth of the glTF-side classes of issue 11: for each file structure that used to make
 * time or memory explode, a generator (gltfCases.mjs) at two sizes, x1 and x4 the bytes; the
 * x4 run may cost at most 2 x 4 times what the x1 run cost above a baseline run on a tiny
 * file (linear growth, with a factor 2 of slack), or the file must be refused with a stable
 * code. Sizes are small so that this runs in `npm test`; quadratic behaviour at these sizes
 * still costs several times the allowance.
 *
 * Every size runs in its own child process (the built CLI, `dist/`, in-process with --jobs 1
 * --file-timeout 0), so one size's garbage never counts for another: peak memory is the
 * child's process.resourceUsage().maxRSS, time the wall time of the CLI's main() after its
 * modules are loaded. No fixed time bound: only ratios inside one run.
 */
import { spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildCase } from './gltfCases.mjs';

const repo = path.resolve(__dirname, '../..');
const mainUrl = pathToFileURL(path.join(repo, 'dist', 'cli', 'main.js')).href;
/** A tiny valid file (scripts/make-bad-fixtures.js) for the baseline run. */
const tiny = path.join(repo, 'fixtures', 'values', 'single-triangle.glb');

/** Growth allowed from x1 to x4: linear (4) times 2. */
const ALLOWED_RATIO = 8;
/** The x1 cost above baseline counts as at least this much (below it, noise dominates). */
const MEMORY_FLOOR_KIB = 16 * 1024;
const TIME_FLOOR_S = 0.5;

/** The child: loads the CLI, runs it once, prints its cost as the last stdout line. */
const CHILD = `
const { main } = await import(process.env.COST_MAIN);
const argv = JSON.parse(process.env.COST_ARGV);
let out = '';
const t0 = performance.now();
const code = await main(argv, { stdout: (s) => { out += s; }, stderr: () => {}, cwd: process.cwd(), isTTY: false, env: {} });
const seconds = (performance.now() - t0) / 1000;
process.stdout.write(out + '\\n' + JSON.stringify({ code, seconds, maxRssKiB: process.resourceUsage().maxRSS }) + '\\n');
`;

let root = '';
beforeAll(() => {
  root = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-cost-gltf-'));
  // A file, not --eval: worker threads inherit the process's flags.
  fs.writeFileSync(path.join(root, 'child.mjs'), CHILD);
});
afterAll(() => fs.rmSync(root, { recursive: true, force: true }));

interface Cost {
  code: number;
  seconds: number;
  maxRssKiB: number;
  /** error.code of each failed file in the JSON report. */
  errors: (string | null)[];
  stdout: string;
}

/** Runs `tanframe <argv>` in a fresh process and returns what it cost. */
function measure(argv: string[], timeoutMs = 300_000): Cost {
  const r = spawnSync(process.execPath, [path.join(root, 'child.mjs')], {
    cwd: root,
    env: { ...process.env, COST_MAIN: mainUrl, COST_ARGV: JSON.stringify(argv) },
    encoding: 'utf8',
    maxBuffer: 64 * 1024 * 1024,
    // A run past this is a failure of its own.
    timeout: timeoutMs,
  });
  expect(r.status, r.stderr).toBe(0);
  const lines = r.stdout.trimEnd().split('\n');
  const cost = JSON.parse(lines.pop()!);
  const stdout = lines.join('\n');
  let errors: (string | null)[] = [];
  try {
    errors = JSON.parse(stdout).files.map((f: any) => f.error?.code ?? null);
  } catch {
    // Not a JSON report (bake without --json).
  }
  return { ...cost, errors, stdout };
}

const RUN = ['--jobs', '1', '--file-timeout', '0', '--json', '--quiet'];

let baseline: Cost;
function base(): Cost {
  baseline ??= measure(['audit', tiny, ...RUN]);
  return baseline;
}

/** Checks x4 cost at most ALLOWED_RATIO times x1 cost, both above the baseline. */
function expectLinear(what: string, x1: Cost, x4: Cost): void {
  const b = base();
  const m1 = Math.max(x1.maxRssKiB - b.maxRssKiB, MEMORY_FLOOR_KIB);
  const m4 = x4.maxRssKiB - b.maxRssKiB;
  const t1 = Math.max(x1.seconds - b.seconds, TIME_FLOOR_S);
  const t4 = x4.seconds - b.seconds;
  console.log(`${what}: x1 ${x1.seconds.toFixed(2)} s ${(x1.maxRssKiB / 1024).toFixed(0)} MiB; x4 ${x4.seconds.toFixed(2)} s ${(x4.maxRssKiB / 1024).toFixed(0)} MiB (baseline ${b.seconds.toFixed(2)} s ${(b.maxRssKiB / 1024).toFixed(0)} MiB)`);
  expect(m4, `${what}: peak memory above baseline, x4 vs x1 (KiB)`).toBeLessThanOrEqual(ALLOWED_RATIO * m1);
  expect(t4, `${what}: seconds above baseline, x4 vs x1`).toBeLessThanOrEqual(ALLOWED_RATIO * t1);
}

async function writeCase(name: string, scale: number, ext: string, size = 1): Promise<string> {
  const file = path.join(root, `${name}-x${scale}.${ext}`);
  fs.writeFileSync(file, await buildCase(name, scale, size));
  return file;
}

describe('cost grows linearly with the input, whatever its structure', () => {
  it('primitives indexing slices of one shared vertex buffer: each costs what it references; output follows', async () => {
    const costs: Cost[] = [];
    const outputs: number[] = [];
    for (const scale of [1, 4]) {
      const file = await writeCase('shared-buffer', scale, 'glb');
      const out = path.join(root, `shared-buffer-x${scale}.out.glb`);
      const c = measure(['bake', file, '-o', out, ...RUN]);
      expect(c.errors).toEqual([null]);
      costs.push(c);
      outputs.push(fs.statSync(out).size / fs.statSync(file).size);
    }
    expectLinear('shared vertex buffer (bake)', costs[0], costs[1]);
    // The output holds what each primitive uses: about the input's size, at both sizes
    // (before: P copies of the whole buffer).
    expect(outputs[1]).toBeLessThan(2 * outputs[0]);
    expect(outputs[1]).toBeLessThan(3);
  });

  it('morph targets naming the same accessors: solved once, their output shared', async () => {
    const costs: Cost[] = [];
    const ratios: number[] = [];
    for (const scale of [1, 4]) {
      const file = await writeCase('shared-morphs', scale, 'glb', 2);
      const out = path.join(root, `shared-morphs-x${scale}.out.glb`);
      costs.push(measure(['bake', file, '-o', out, ...RUN]));
      ratios.push(fs.statSync(out).size / fs.statSync(file).size);
    }
    expect(costs.map((c) => c.errors)).toEqual([[null], [null]]);
    expectLinear('shared morph targets (bake)', costs[0], costs[1]);
    expect(ratios[1]).toBeLessThan(3);
  });

  it('a Draco stream holding more than its primitive declares: refused with bad-draco from its header', async () => {
    const costs: Cost[] = [];
    for (const scale of [1, 4]) costs.push(measure(['audit', await writeCase('draco-counts', scale, 'glb'), ...RUN]));
    expect(costs.map((c) => c.errors)).toEqual([['bad-draco'], ['bad-draco']]);
    expectLinear('Draco counts (audit)', costs[0], costs[1]);
  });

  it('a Draco primitive baked with --compression keep: encoded again in linear time and memory, output Draco-sized', async () => {
    const costs: Cost[] = [];
    const ratios: number[] = [];
    for (const scale of [1, 4]) {
      const file = await writeCase('draco-grid', scale, 'glb');
      const out = path.join(root, `draco-grid-x${scale}.out.glb`);
      const c = measure(['bake', file, '-o', out, ...RUN]);
      expect(c.errors).toEqual([null]);
      expect(JSON.parse(c.stdout).files[0].primitives[0].compression).toEqual({ in: 'draco', out: 'draco' });
      costs.push(c);
      ratios.push(fs.statSync(out).size / fs.statSync(file).size);
    }
    expectLinear('Draco re-encoding (bake)', costs[0], costs[1]);
    // The output grows with the input: the added tangents, not a decoded copy (about 10x).
    expect(ratios[1]).toBeLessThan(1.5 * ratios[0]);
    expect(ratios[1]).toBeLessThan(4);
  });

  it('JSON of many small objects: linear, within the documented multiple, and refused when denser than the budget', async () => {
    const costs: Cost[] = [];
    const sizes: number[] = [];
    for (const scale of [1, 4]) {
      const file = await writeCase('json-objects', scale, 'gltf');
      sizes.push(fs.statSync(file).size);
      costs.push(measure(['audit', file, ...RUN]));
    }
    expect(costs.map((c) => c.errors)).toEqual([[null], [null]]);
    expectLinear('JSON of small objects (audit)', costs[0], costs[1]);
    // README, Bad input (Limits): at most about 30 times the input's bytes above the process's
    // own memory, plus the heap's young generation (a constant of V8's, some tens of MiB).
    expect((costs[1].maxRssKiB - base().maxRssKiB) * 1024).toBeLessThan(30 * sizes[1] + 48 * 1024 * 1024);
    // [{},{},...] at 8 MB would take about 19 times its size to parse: refused before parsing.
    const dense = path.join(root, 'dense.gltf');
    fs.writeFileSync(dense, `{"asset":{"version":"2.0"},"extras":[${'{},'.repeat(2_700_000)}{}]}`);
    const d = measure(['audit', dense, ...RUN]);
    expect(d.errors).toEqual(['too-large']);
    expect((d.maxRssKiB - base().maxRssKiB) * 1024).toBeLessThan(4 * fs.statSync(dense).size);
  });

  it.skipIf(process.platform !== 'linux')('an input linked to an endless /proc file is refused at once', () => {
    const link = path.join(root, 'pagemap.glb');
    fs.symlinkSync('/proc/self/pagemap', link);
    // Reading it used to go on until memory ran out: a few seconds of it show the fault.
    const c = measure(['audit', link, ...RUN], 10_000);
    expect(c.errors).toEqual(['read-failed']);
    expect(c.maxRssKiB - base().maxRssKiB).toBeLessThan(MEMORY_FLOOR_KIB);
  });

  it('--jobs far above the cores costs no more memory than --jobs at the cores', () => {
    const dir = path.join(root, 'many');
    fs.mkdirSync(dir);
    for (let i = 0; i < 12; i++) fs.copyFileSync(tiny, path.join(dir, `t${String(i).padStart(2, '0')}.glb`));
    const cores = String(os.availableParallelism());
    const atCores = measure(['audit', dir, '--jobs', cores, '--json', '--quiet']);
    const hundred = measure(['audit', dir, '--jobs', '100', '--json', '--quiet']);
    expect(hundred.errors).toEqual(new Array(12).fill(null));
    // Each further worker thread would hold its own heap (tens of MiB).
    expect(hundred.maxRssKiB - atCores.maxRssKiB).toBeLessThan(MEMORY_FLOOR_KIB);
  });
});
