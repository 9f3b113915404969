/**
 * Writes under stress: failures leave no temporary files, a bake killed mid-write leaves the
 * old output or none (never a torn file), stale temporary files of killed processes are
 * removed by the next run, two processes baking into one folder leave only complete files,
 * and a file past --file-timeout is stopped while the batch goes on.
 *
 * The child-process tests run the built CLI (`node bin/tanframe.js`, dist/): `npm test`
 * builds first.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { createHash } from 'node:crypto';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { tempHost, removeStaleTemps } from '../../src/io/files.js';
import { readAsset } from '../../src/lib/processFile.js';
import { bigGridGlb } from '../helpers/bigGlb.js';
import { runCli } from '../helpers/cli.js';
import { validateGltfFile } from '../helpers/validate.js';

const repo = path.resolve(__dirname, '../..');
const bin = path.join(repo, 'bin', 'tanframe.js');
const demo = path.join(repo, 'examples', 'harbor-props');
const small = path.join(repo, 'fixtures', 'values', 'single-triangle.glb');
let tmp = '';
let bigInput = '';
/** Grid size of the big input: 2 n^2 = 2 million triangles, a bake of a few seconds. */
const BIG_N = 1000;

beforeAll(() => {
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-writes-'));
  expect(fs.existsSync(path.join(repo, 'dist', 'cli', 'main.js')), 'run `npm run build` first').toBe(true);
  bigInput = path.join(tmp, 'in', 'big.glb');
  fs.mkdirSync(path.dirname(bigInput), { recursive: true });
  fs.writeFileSync(bigInput, bigGridGlb(BIG_N));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

function sha256(file: string): string {
  return createHash('sha256').update(fs.readFileSync(file)).digest('hex');
}

function listFiles(dir: string): string[] {
  if (!fs.existsSync(dir)) return [];
  const out: string[] = [];
  for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) out.push(...listFiles(p).map((f) => path.join(e.name, f)));
    else out.push(e.name);
  }
  return out.sort();
}

const isTemp = (name: string) => /^\..*\.tmp$/.test(path.basename(name));

/** The pid of a process that has already exited. */
function deadPid(): number {
  const r = spawnSync(process.execPath, ['-e', '']);
  return r.pid!;
}

/** A temporary-file name as tanframe writes them, for `target` and `pid`. */
function tempName(target: string, pid: number, host = tempHost()): string {
  return `.${target}.${host}.${pid}-0.0123456789ab.tmp`;
}

/** Runs the built CLI to completion. */
function cliSync(args: string[]): { status: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [bin, ...args], { cwd: tmp, encoding: 'utf8' });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

function exited(child: ChildProcess): Promise<number | null> {
  return new Promise((resolve) => child.once('exit', (code) => resolve(code)));
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('failed writes leave nothing behind', () => {
  it('removes the temporary files when one destination of a .gltf bake is a folder', async () => {
    // The .gltf and its .bin are written to temporaries first; the .bin's destination is a
    // folder, found before any rename: nothing may be left but that folder. The buffer is
    // named by its content: a first bake elsewhere gives its name.
    const probe = path.join(tmp, 'fail-folder-probe');
    expect((await runCli(['bake', small, '-o', path.join(probe, 'tri.gltf'), '--quiet'], repo)).code).toBe(0);
    const binName = fs.readdirSync(probe).find((n) => n.endsWith('.bin'))!;
    expect(binName).toMatch(/^tri\.[0-9a-f]{16}\.bin$/);
    const out = path.join(tmp, 'fail-folder');
    fs.mkdirSync(path.join(out, binName), { recursive: true });
    const r = await runCli(['bake', small, '-o', path.join(out, 'tri.gltf'), '--format', 'gltf', '--json'], repo);
    expect(r.code).toBe(3);
    expect(JSON.parse(r.stdout).files[0].error.code).toBe('write-failed');
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(fs.readdirSync(out)).toEqual([binName]);
    expect(fs.readdirSync(path.join(out, binName))).toEqual([]);
  });

  it('fails with write-failed and creates nothing when a parent of the output is a file', async () => {
    const blocker = path.join(tmp, 'blocker');
    fs.writeFileSync(blocker, 'not a folder');
    const r = await runCli(['bake', small, '-o', path.join(blocker, 'sub', 'tri.glb'), '--json'], repo);
    expect(r.code).toBe(3);
    expect(JSON.parse(r.stdout).files[0].error.code).toBe('write-failed');
    expect(fs.readFileSync(blocker, 'utf8')).toBe('not a folder');
  });
});

describe('stale temporary files', () => {
  it('removeStaleTemps removes ours from dead processes on this host, nothing else', async () => {
    const dir = path.join(tmp, 'stale-unit');
    fs.mkdirSync(dir, { recursive: true });
    const dead = tempName('a.glb', deadPid());
    const live = tempName('b.glb', process.pid);
    const otherHost = tempName('c.glb', deadPid(), `${tempHost()}-elsewhere`);
    const unrelated = ['.notes.tmp', 'a.glb', '.a.glb.tmp', 'x.12-0.0123456789ab.tmp'];
    for (const n of [dead, live, otherHost, ...unrelated]) fs.writeFileSync(path.join(dir, n), 'x');
    expect(await removeStaleTemps(dir)).toEqual([dead]);
    expect(fs.readdirSync(dir).sort()).toEqual([live, otherHost, ...unrelated].sort());
  });

  it('a bake into a folder removes stale temporary files left there by a killed run', async () => {
    const out = path.join(tmp, 'stale-cli');
    fs.mkdirSync(out, { recursive: true });
    const dead = tempName('tri.glb', deadPid());
    fs.writeFileSync(path.join(out, dead), 'half a file');
    const r = await runCli(['bake', small, '-o', path.join(out, 'tri.glb'), '--quiet'], repo);
    expect(r.code).toBe(0);
    expect(fs.readdirSync(out)).toEqual(['tri.glb']);
  });

  it('temporary files are never taken as inputs', async () => {
    const dir = path.join(tmp, 'temp-input');
    fs.mkdirSync(dir, { recursive: true });
    fs.copyFileSync(small, path.join(dir, 'tri.glb'));
    fs.writeFileSync(path.join(dir, tempName('tri.glb', deadPid())), fs.readFileSync(small).subarray(0, 40));
    const r = await runCli(['audit', dir, '--json'], repo);
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout).files.map((f: any) => path.basename(f.input))).toEqual(['tri.glb']);
  });
});

describe('a bake killed mid-write', () => {
  it('leaves the old output or the complete new one, never a torn file; a later run cleans up', async () => {
    const out = path.join(tmp, 'kill');
    fs.mkdirSync(out, { recursive: true });
    const target = path.join(out, 'big.glb');

    // The complete output, from one uninterrupted run (output is deterministic).
    const full = cliSync(['bake', bigInput, '-o', target, '--quiet']);
    expect(full.status, full.stderr).toBe(0);
    const completeHash = sha256(target);
    const baked = await readAsset(target);
    expect(baked.primitives[0].attributes.TANGENT).toBeDefined();
    expect(baked.primitives[0].indices!.length).toBe(6 * BIG_N * BIG_N);

    // An old output that is not the new one: the single triangle baked earlier.
    const oldBytes = fs.readFileSync(small);
    const oldHash = createHash('sha256').update(oldBytes).digest('hex');
    const outcomes: string[] = [];
    let leftTemps = 0;
    // Kill at fixed delays (reading, solving, writing) and, twice, the moment the temporary
    // file appears (during the write itself).
    const plans: (number | 'on-temp')[] = [150, 500, 1200, 'on-temp', 'on-temp'];
    for (let k = 0; k < plans.length; k++) {
      const plan = plans[k];
      const withOld = k % 2 === 0;
      if (withOld) fs.writeFileSync(target, oldBytes);
      else fs.rmSync(target, { force: true });
      const child = spawn(process.execPath, [bin, 'bake', bigInput, '-o', target, '--quiet'], { cwd: tmp, stdio: 'ignore' });
      const done = exited(child);
      let finished = false;
      void done.then(() => { finished = true; });
      if (plan === 'on-temp') {
        while (!finished && !fs.readdirSync(out).some(isTemp)) await sleep(1);
      } else {
        await sleep(plan);
      }
      child.kill('SIGKILL');
      await done;

      const names = fs.readdirSync(out);
      for (const n of names) expect(n === 'big.glb' || isTemp(n), n).toBe(true);
      leftTemps += names.filter(isTemp).length;
      if (!fs.existsSync(target)) {
        expect(withOld, 'the old output disappeared').toBe(false);
        outcomes.push(`${plan}: none`);
        continue;
      }
      const h = sha256(target);
      if (h === oldHash) {
        expect(withOld).toBe(true);
        outcomes.push(`${plan}: old`);
      } else {
        expect(h, `torn output after a kill at ${plan}`).toBe(completeHash);
        outcomes.push(`${plan}: new`);
      }
    }
    // The kills at the temporary file's appearance caught a write in progress.
    expect(leftTemps).toBeGreaterThan(0);
    console.log(`kill outcomes: ${outcomes.join(', ')}; temporary files left: ${leftTemps}`);

    // The next run finishes, and removes the temporary files the killed runs left.
    const again = cliSync(['bake', bigInput, '-o', target, '--quiet']);
    expect(again.status, again.stderr).toBe(0);
    expect(fs.readdirSync(out)).toEqual(['big.glb']);
    expect(sha256(target)).toBe(completeHash);
  });
});

describe('two processes baking into one folder at once', () => {
  it('leave only complete, valid files, identical to a single run', async () => {
    const reference = path.join(tmp, 'concurrent-ref');
    const ref = cliSync(['bake', demo, '-o', reference, '--quiet']);
    expect(ref.status, ref.stderr).toBe(0);
    const out = path.join(tmp, 'concurrent');
    const a = spawn(process.execPath, [bin, 'bake', demo, '-o', out, '--quiet', '--jobs', '1'], { cwd: tmp, stdio: 'ignore' });
    const b = spawn(process.execPath, [bin, 'bake', demo, '-o', out, '--quiet', '--jobs', '2'], { cwd: tmp, stdio: 'ignore' });
    expect(await Promise.all([exited(a), exited(b)])).toEqual([0, 0]);
    const files = listFiles(out);
    expect(files).toEqual(listFiles(reference));
    expect(files.filter(isTemp)).toEqual([]);
    for (const f of files) expect(sha256(path.join(out, f)), f).toBe(sha256(path.join(reference, f)));
    for (const f of files.filter((p) => /\.(glb|gltf)$/.test(p))) {
      // Source: Khronos gltf-validator.
      const v = await validateGltfFile(path.join(out, f));
      expect(v.errors, `${f}: ${v.messages.join('; ')}`).toBe(0);
    }
  });
});

describe('--file-timeout', () => {
  it('stops a file that takes too long, reports it as timeout, and the batch goes on', async () => {
    const dir = path.join(tmp, 'timeout-in');
    fs.mkdirSync(dir, { recursive: true });
    fs.copyFileSync(bigInput, path.join(dir, 'a_big.glb'));
    fs.copyFileSync(small, path.join(dir, 'b_small.glb'));
    const out = path.join(tmp, 'timeout-out');
    // The 2-million-triangle bake takes seconds; half a second stops it. --jobs 1: even one
    // thread runs the batch on a worker, so it can be stopped.
    const r = await runCli(['bake', dir, '-o', out, '--file-timeout', '0.5', '--jobs', '1', '--json'], repo);
    expect(r.code).toBe(3);
    const lines = r.stderr.trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^tanframe: .*a_big\.glb: .*--file-timeout/);
    const report = JSON.parse(r.stdout);
    const big = report.files.find((f: any) => f.input.endsWith('a_big.glb'));
    const ok = report.files.find((f: any) => f.input.endsWith('b_small.glb'));
    expect(big.status).toBe('failed');
    expect(big.error.code).toBe('timeout');
    expect(big.output).toBeNull();
    expect(ok.status).toBe('ok');
    // The stopped file left no output and no temporary file (beside the run's state file).
    expect(listFiles(out)).toEqual(['.tanframe-state.json', 'b_small.glb']);
  });

  it('holds for a single input too: the one file, run on the main thread, is stopped in its solve', async () => {
    const out = path.join(tmp, 'timeout-single-out');
    const r = await runCli(['bake', bigInput, '-o', out, '--file-timeout', '0.5', '--json'], repo);
    expect(r.code).toBe(3);
    expect(r.stderr).toMatch(/^tanframe: .*big\.glb: stopped after 0\.5 s \(--file-timeout\)\n$/);
    const file = JSON.parse(r.stdout).files[0];
    expect(file.error.code).toBe('timeout');
    expect(file.output).toBeNull();
    expect(fs.existsSync(out) ? listFiles(out) : []).toEqual([]);
  });
});
