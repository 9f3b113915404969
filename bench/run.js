// tanframe benchmarks (plain Node on dist/; `npm run bench` builds first). Prints tables and
// writes bench/results.json. Speed goals live here, never in unit tests.
//   node --expose-gc bench/run.js [--quick]     --quick: smaller sizes and fewer runs (a smoke run)
// With --expose-gc a full collection runs before every timed call, so no method pays for the
// garbage another one left (three's per-vertex objects especially).
import { spawn } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { computeFrames } from '../dist/index.js';
import { makeMesh } from './cases.js';
import { writeMeshGlb } from './glb.js';
import { prepareThree, runThree } from './threeTangents.js';

const here = path.dirname(fileURLToPath(import.meta.url));
const repo = path.resolve(here, '..');
const quick = process.argv.includes('--quick');
const SIZES = quick ? [10_000, 100_000] : [10_000, 100_000, 1_000_000, 4_000_000];
const MESHES = ['sphere', 'scan'];
const results = { machine: { cpus: os.cpus().length, model: os.cpus()[0]?.model ?? '', node: process.version, totalMemGB: Math.round(os.totalmem() / 2 ** 30) }, frames: [], memory: [], endToEnd: {}, batch: {} };

const median = (xs) => { const s = [...xs].sort((a, b) => a - b); const m = s.length >> 1; return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2; };
const fmt = (x, d = 0) => x.toFixed(d).padStart(8);
function runsFor(tris) {
  if (quick) return 5;
  return tris <= 10_000 ? 25 : tris <= 100_000 ? 11 : tris <= 1_000_000 ? 7 : 5;
}

function child(args) {
  return new Promise((resolve, reject) => {
    const t = performance.now();
    const p = spawn(process.execPath, [path.join(here, 'child.js'), ...args], { cwd: repo, stdio: ['ignore', 'pipe', 'inherit'] });
    let out = '';
    p.stdout.on('data', (d) => { out += d; });
    p.on('error', reject);
    p.on('close', (code) => {
      const wallMs = performance.now() - t;
      try { resolve({ ...JSON.parse(out.trim().split('\n').pop()), wallMs, exit: code }); } catch { reject(new Error(`child failed (${code}): ${args.join(' ')}`)); }
    });
  });
}

// 1. computeFrames vs three, alternating runs, medians.
console.log('computeFrames (ms, median) vs three BufferGeometry.computeTangents on the same arrays');
console.log('mesh      triangles   lengyel  mikktspace     three  three/lengyel  three/mikk  ns/tri(mikk)');
for (const kind of MESHES) {
  for (const size of SIZES) {
    const m = makeMesh(kind, size);
    const tris = m.indices.length / 3;
    const g = prepareThree(m);
    const tasks = {
      lengyel: () => computeFrames(m, { method: 'lengyel' }),
      mikktspace: () => computeFrames(m, { method: 'mikktspace' }),
      three: () => runThree(g),
    };
    const names = Object.keys(tasks);
    for (const n of names) tasks[n](); // warm-up
    const times = { lengyel: [], mikktspace: [], three: [] };
    const runs = runsFor(size);
    for (let r = 0; r < runs; r++) {
      for (let k = 0; k < names.length; k++) {
        const n = names[(r + k) % names.length]; // rotate the order each round
        if (globalThis.gc) globalThis.gc(); // each run starts without the others' garbage
        const t = performance.now();
        tasks[n]();
        times[n].push(performance.now() - t);
      }
    }
    const row = {
      mesh: kind, triangles: tris, vertices: m.positions.length / 3, runs,
      lengyelMs: median(times.lengyel), mikktspaceMs: median(times.mikktspace), threeMs: median(times.three),
    };
    row.threeOverLengyel = row.threeMs / row.lengyelMs;
    row.threeOverMikktspace = row.threeMs / row.mikktspaceMs;
    row.nsPerTriangle = { lengyel: (row.lengyelMs * 1e6) / tris, mikktspace: (row.mikktspaceMs * 1e6) / tris, three: (row.threeMs * 1e6) / tris };
    results.frames.push(row);
    console.log(`${kind.padEnd(8)} ${String(tris).padStart(10)} ${fmt(row.lengyelMs, 1)} ${fmt(row.mikktspaceMs, 1)}   ${fmt(row.threeMs, 1)}  ${fmt(row.threeOverLengyel, 2)}x    ${fmt(row.threeOverMikktspace, 2)}x  ${fmt(row.nsPerTriangle.mikktspace, 0)}`);
  }
}
for (const kind of MESHES) {
  const rows = results.frames.filter((r) => r.mesh === kind);
  const small = rows.find((r) => r.triangles >= 90_000 && r.triangles <= 110_000);
  const big = rows[rows.length - 1];
  if (small && big !== small) {
    const growth = big.nsPerTriangle.mikktspace / small.nsPerTriangle.mikktspace;
    results[`growth_${kind}`] = growth;
    console.log(`${kind}: mikktspace time per triangle at ${big.triangles} is ${growth.toFixed(2)}x that at ${small.triangles}`);
  }
}

// 2. Peak memory, each case in a fresh process.
console.log('\npeak RSS per call (MB; fresh process: mesh baseline -> peak)');
for (const kind of MESHES) {
  for (const size of SIZES) {
    const line = [];
    for (const method of ['lengyel', 'mikktspace', 'three']) {
      const r = await child(['frames', kind, String(size), method]);
      results.memory.push({ mesh: kind, triangles: size, method, baseRssMB: r.baseRssMB, peakRssMB: r.maxRssMB });
      line.push(`${method} ${r.baseRssMB}->${r.maxRssMB}`);
    }
    console.log(`${kind.padEnd(8)} ${String(size).padStart(9)}  ${line.join('   ')}`);
  }
}

// 3. End to end: bake a 1M-triangle GLB.
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-bench-'));
try {
  const e2eTris = quick ? 100_000 : 1_000_000;
  const input = path.join(tmp, 'scan.glb');
  writeMeshGlb(input, makeMesh('scan', e2eTris));
  const runs = [];
  for (let i = 0; i < 3; i++) runs.push(await child(['cli', 'bake', input, '-o', path.join(tmp, 'scan-out.glb'), '--quiet']));
  const best = runs.sort((a, b) => a.wallMs - b.wallMs)[1];
  results.endToEnd = { triangles: e2eTris, inputMB: fs.statSync(input).size / 2 ** 20, processWallMs: best.wallMs, inProcessMs: best.ms, peakRssMB: best.maxRssMB, exit: best.exit };
  console.log(`\nend to end: bake ${e2eTris} triangles (${results.endToEnd.inputMB.toFixed(1)} MB GLB): whole process ${(best.wallMs / 1000).toFixed(2)} s (median of 3), peak RSS ${best.maxRssMB} MB`);

  // 4. Batch: 200 small GLBs, --jobs 1 vs --jobs 2.
  const batch = path.join(tmp, 'batch');
  fs.mkdirSync(batch);
  for (let i = 0; i < 200; i++) writeMeshGlb(path.join(batch, `prop_${String(i).padStart(3, '0')}.glb`), makeMesh(i % 2 ? 'sphere' : 'scan', 4000 + (i % 7) * 1500));
  const j1 = [], j2 = [];
  for (let i = 0; i < 3; i++) {
    j1.push((await child(['cli', 'bake', batch, '-o', path.join(tmp, 'b1'), '--quiet', '--jobs', '1'])).wallMs);
    j2.push((await child(['cli', 'bake', batch, '-o', path.join(tmp, 'b2'), '--quiet', '--jobs', '2'])).wallMs);
  }
  results.batch = { files: 200, jobs1Ms: median(j1), jobs2Ms: median(j2), speedup: median(j1) / median(j2) };
  console.log(`batch of 200 GLBs: --jobs 1 ${(results.batch.jobs1Ms / 1000).toFixed(2)} s, --jobs 2 ${(results.batch.jobs2Ms / 1000).toFixed(2)} s, speedup ${results.batch.speedup.toFixed(2)}x`);
} finally {
  fs.rmSync(tmp, { recursive: true, force: true });
}

// 5. convert-map on a 4096 x 4096 map (its own script; its table is printed as it is).
if (!process.argv.includes('--no-convert')) {
  console.log('\nconvert-map (bench/convertMap.js):');
  const size = quick ? '1024' : '4096';
  const code = await new Promise((resolve) => {
    const p = spawn(process.execPath, [path.join(here, 'convertMap.js'), '--size', size, '--runs', quick ? '1' : '3'], { cwd: repo, stdio: 'inherit' });
    p.on('close', resolve);
  });
  results.convertMap = { size: Number(size), exit: code };
}

// 6. render: one 512 x 512 view of a 100k-triangle model (its own script).
if (!process.argv.includes('--no-render')) {
  console.log('\nrender (bench/render.js):');
  const code = await new Promise((resolve) => {
    const p = spawn(process.execPath, ['--expose-gc', path.join(here, 'render.js'), '--runs', quick ? '3' : '7'], { cwd: repo, stdio: 'inherit' });
    p.on('close', resolve);
  });
  results.render = { exit: code };
}

fs.writeFileSync(path.join(here, 'results.json'), JSON.stringify(results, null, 2) + '\n');
console.log(`\nwrote ${path.relative(process.cwd(), path.join(here, 'results.json'))}`);
