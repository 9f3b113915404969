// tanframe benchmarks (plain Node on dist/; `npm run bench` builds first). Prints tables and
// writes bench/results.json. Speed goals live here, never in unit tests.
//   node --expose-gc bench/run.js [--quick]     --quick: smaller sizes and fewer runs (a smoke run)
// With --expose-gc a full collection runs before every timed call, so no method pays for the
// garbage another one left (three's per-vertex objects especially).
import { spawn } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { computeFrames } from '../dist/index.js';
import { makeMesh } from './cases.js';
import { measureThreadScaling } from './scaling.js';
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

function child(args, nodeFlags = []) {
  return new Promise((resolve, reject) => {
    const t = performance.now();
    const p = spawn(process.execPath, [...nodeFlags, path.join(here, 'child.js'), ...args], { cwd: repo, stdio: ['ignore', 'pipe', 'inherit'] });
    let out = '';
    p.stdout.on('data', (d) => { out += d; });
    p.on('error', reject);
    p.on('close', (code) => {
      const wallMs = performance.now() - t;
      try { resolve({ ...JSON.parse(out.trim().split('\n').pop()), wallMs, exit: code }); } catch { reject(new Error(`child failed (${code}): ${args.join(' ')}`)); }
    });
  });
}

let statsCount = 0;
/**
 * Runs `node <args>` to its end: wall time and exit code; with `stats`, also its peak RSS and
 * minor page faults, written at exit by the preloaded bench/exitStats.js (start-up runs go
 * without it, so they time nothing but the command).
 */
function spawnTimed(args, stats = false) {
  return new Promise((resolve, reject) => {
    const file = path.join(os.tmpdir(), `tanframe-bench-stats-${process.pid}-${statsCount++}.json`);
    const flags = stats ? ['--import', pathToFileURL(path.join(here, 'exitStats.js')).href] : [];
    const t = performance.now();
    const p = spawn(process.execPath, [...flags, ...args], { cwd: repo, stdio: ['ignore', 'ignore', 'inherit'], env: stats ? { ...process.env, TANFRAME_BENCH_STATS: file } : process.env });
    p.on('error', reject);
    p.on('close', (code) => {
      const wallMs = performance.now() - t;
      let figures = {};
      if (stats) {
        try { figures = JSON.parse(fs.readFileSync(file, 'utf8')); fs.rmSync(file, { force: true }); } catch { /* none written */ }
      }
      if (code !== 0 && code !== 1) reject(new Error(`command failed (${code}): node ${args.join(' ')}`));
      else resolve({ wallMs, exit: code, ...figures });
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
    for (const method of ['mikktspace', 'lengyel']) {
      const growth = big.nsPerTriangle[method] / small.nsPerTriangle[method];
      results[`growth_${kind}_${method}`] = { growth, from: small.triangles, to: big.triangles };
      console.log(`${kind}: ${method} time per triangle at ${big.triangles} is ${growth.toFixed(2)}x that at ${small.triangles}`);
    }
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

// 3. End to end: bake a 1M-triangle GLB (whole process, as the CLI runs it), then the same
//    bake in-process with allocations counted, and the diagnostics' share of it.
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-bench-'));
try {
  const e2eTris = quick ? 100_000 : 1_000_000;
  const input = path.join(tmp, 'scan.glb');
  writeMeshGlb(input, makeMesh('scan', e2eTris));
  const runs = [];
  for (let i = 0; i < 3; i++) runs.push(await spawnTimed([path.join(repo, 'bin', 'tanframe.js'), 'bake', input, '-o', path.join(tmp, 'scan-out.glb'), '--quiet'], true));
  const best = runs.sort((a, b) => a.wallMs - b.wallMs)[1];
  const alloc = await child(['alloc', 'bake', input, '-o', path.join(tmp, 'scan-out.glb'), '--quiet', '--jobs', '1', '--file-timeout', '0']);
  const share = await child(['share', input, '3'], ['--expose-gc']);
  results.endToEnd = {
    triangles: e2eTris, inputMB: fs.statSync(input).size / 2 ** 20, processWallMs: best.wallMs, peakRssMB: best.peakRssMB, exit: best.exit,
    minorFaults: best.minorFaults, inProcess: { allocatedMB: alloc.allocMB, typedArrays: alloc.arrays, minorFaults: alloc.minorFaults, peakRssMB: alloc.maxRssMB },
    diagnose: { bakeMs: share.bakeMs, diagnoseMs: share.diagnoseMs, share: share.share },
  };
  console.log(`\nend to end: bake ${e2eTris} triangles (${results.endToEnd.inputMB.toFixed(1)} MB GLB): whole process ${(best.wallMs / 1000).toFixed(2)} s (median of 3), peak RSS ${best.peakRssMB} MB, ${best.minorFaults} minor page faults`);
  console.log(`  in-process (--jobs 1 --file-timeout 0): ${alloc.allocMB.toFixed(0)} MB in ${alloc.arrays} typed arrays and buffers allocated, ${alloc.minorFaults} minor page faults, peak RSS ${alloc.maxRssMB} MB`);
  console.log(`  diagnostics: ${share.diagnoseMs.toFixed(0)} ms of an in-process bake of ${share.bakeMs.toFixed(0)} ms (${(100 * share.share).toFixed(0)}%)`);

  // 4. Batches, --jobs 1 vs --jobs 2, whole process, median of 3 each (order alternates).
  const batches = quick ? [{ name: '20 x 5k', files: 20, tris: 5_000 }] : [{ name: '40 x 100k', files: 40, tris: 100_000 }, { name: '200 x 5k', files: 200, tris: 5_000 }];
  results.batch = {};
  for (const b of batches) {
    const dir = path.join(tmp, `batch-${b.files}`);
    fs.mkdirSync(dir);
    for (let i = 0; i < b.files; i++) writeMeshGlb(path.join(dir, `prop_${String(i).padStart(3, '0')}.glb`), makeMesh(i % 2 ? 'sphere' : 'scan', b.tris));
    const j1 = [], j2 = [];
    // Each run also gives its CPU time (every thread) and, in its report, each file's seconds:
    // what a second thread costs beside what it gains (see "what bounds the batch" below).
    const cpu = { 1: [], 2: [] }, perFile = { 1: [], 2: [] };
    const bake = async (jobs) => {
      const report = path.join(tmp, `batch-${b.files}-${jobs}.json`);
      const r = await spawnTimed([path.join(repo, 'bin', 'tanframe.js'), 'bake', dir, '-o', path.join(tmp, `out-${b.files}-${jobs}`), '--quiet', '--force', '--jobs', String(jobs), '--report', report], true);
      cpu[jobs].push(r.cpuMs);
      perFile[jobs].push(JSON.parse(fs.readFileSync(report, 'utf8')).files.map((f) => f.seconds * 1000));
      (jobs === 1 ? j1 : j2).push(r.wallMs);
    };
    for (let i = 0; i < 3; i++) {
      if (i % 2) { await bake(2); await bake(1); } else { await bake(1); await bake(2); }
    }
    // Warm-up: the first files a thread bakes run before its code is optimised. Each thread
    // starts on the first two jobs handed out to it (jobs 0..2*jobs-1 in a fresh run).
    const warm = (jobs) => median(perFile[jobs].map((s) => s.slice(0, 2 * jobs).reduce((x, y) => x + y, 0) / (2 * jobs)));
    const steady = (jobs) => median(perFile[jobs].map((s) => median(s.slice(Math.min(s.length - 1, 4 * jobs)))));
    results.batch[b.name] = {
      files: b.files, triangles: b.tris, jobs1Ms: median(j1), jobs2Ms: median(j2), speedup: median(j1) / median(j2),
      cpuMs: { jobs1: median(cpu[1]), jobs2: median(cpu[2]) },
      perFileMs: { jobs1: { firstFiles: warm(1), steady: steady(1) }, jobs2: { firstFiles: warm(2), steady: steady(2) } },
    };
    const bb = results.batch[b.name];
    console.log(`batch of ${b.name} GLBs: --jobs 1 ${(median(j1) / 1000).toFixed(2)} s, --jobs 2 ${(median(j2) / 1000).toFixed(2)} s, speedup ${(median(j1) / median(j2)).toFixed(2)}x`);
    console.log(`  CPU time (all threads): --jobs 1 ${(bb.cpuMs.jobs1 / 1000).toFixed(2)} s, --jobs 2 ${(bb.cpuMs.jobs2 / 1000).toFixed(2)} s; per file, first files of a thread / steady: --jobs 1 ${bb.perFileMs.jobs1.firstFiles.toFixed(0)} / ${bb.perFileMs.jobs1.steady.toFixed(0)} ms, --jobs 2 ${bb.perFileMs.jobs2.firstFiles.toFixed(0)} / ${bb.perFileMs.jobs2.steady.toFixed(0)} ms`);
  }
  // What two threads can gain here at all, by kind of work (bench/scaling.js): the ceiling of the batch ratios.
  results.threadScaling = await measureThreadScaling();
  console.log(`two threads side by side on this machine: ${Object.entries(results.threadScaling).map(([k, v]) => `${k} ${v.scaling.toFixed(2)}x`).join(', ')} (2.00x = perfect)`);

  // Start-up: an empty Node process, `tanframe --version`, and a bake of one triangle, whole
  //    process each, interleaved, median of 11.
  const one = path.join(tmp, 'one.glb');
  writeMeshGlb(one, { positions: new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0]), normals: new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1]), uvs: new Float32Array([0, 0, 1, 0, 0, 1]), indices: new Uint32Array([0, 1, 2]) });
  const bin = path.join(repo, 'bin', 'tanframe.js');
  const st = { node: [], version: [], oneTriangle: [] };
  for (let i = 0; i < (quick ? 5 : 11); i++) {
    st.node.push((await spawnTimed(['-e', '0'])).wallMs);
    st.version.push((await spawnTimed([bin, '--version'])).wallMs);
    st.oneTriangle.push((await spawnTimed([bin, 'bake', one, '-o', path.join(tmp, 'one-out.glb'), '--quiet'])).wallMs);
  }
  results.startup = { nodeMs: median(st.node), versionMs: median(st.version), oneTriangleMs: median(st.oneTriangle) };
  console.log(`start-up: node -e 0 ${median(st.node).toFixed(0)} ms, tanframe --version ${median(st.version).toFixed(0)} ms (${(median(st.version) / median(st.node)).toFixed(2)}x), bake of 1 triangle ${median(st.oneTriangle).toFixed(0)} ms (${(median(st.oneTriangle) / median(st.node)).toFixed(2)}x)`);
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

// 7. The targets (issue "Speed, round 2"), each with its measured value and PASS / MISS.
const targets = [];
const target = (name, value, pass, shown) => targets.push({ name, value, pass, shown });
for (const kind of MESHES) {
  for (const [size, mikk] of [[1_000_000, 2.5], [4_000_000, 2]]) {
    const row = results.frames.find((r) => r.mesh === kind && Math.abs(r.triangles - size) < size * 0.01);
    if (!row) { target(`mikktspace >= ${mikk}x three, ${kind} ${size / 1e6}M`, null, null); target(`lengyel >= 10x three, ${kind} ${size / 1e6}M`, null, null); continue; }
    target(`mikktspace >= ${mikk}x three, ${kind} ${size / 1e6}M`, row.threeOverMikktspace, row.threeOverMikktspace >= mikk, `${row.threeOverMikktspace.toFixed(2)}x`);
    target(`lengyel >= 10x three, ${kind} ${size / 1e6}M`, row.threeOverLengyel, row.threeOverLengyel >= 10, `${row.threeOverLengyel.toFixed(2)}x`);
  }
  for (const method of ['mikktspace', 'lengyel']) {
    const g = results[`growth_${kind}_${method}`];
    const full = g && g.to >= 3_900_000;
    target(`${method} time per triangle at 4M <= 1.3x that at 100k, ${kind}`, full ? g.growth : null, full ? g.growth <= 1.3 : null, full ? `${g.growth.toFixed(2)}x` : undefined);
  }
}
const e = results.endToEnd;
const e2eFull = e.triangles >= 1_000_000;
target('bake of the 1M-triangle GLB <= 0.9 s, whole process', e2eFull ? e.processWallMs : null, e2eFull ? e.processWallMs <= 900 : null, `${(e.processWallMs / 1000).toFixed(2)} s`);
target('bake of the 1M-triangle GLB <= 300 MB peak RSS', e2eFull && e.peakRssMB != null ? e.peakRssMB : null, e2eFull && e.peakRssMB != null ? e.peakRssMB <= 300 : null, `${e.peakRssMB} MB`);
target('diagnostics <= 25% of the 1M-triangle bake (in-process)', e2eFull ? e.diagnose.share : null, e2eFull ? e.diagnose.share <= 0.25 : null, `${(100 * e.diagnose.share).toFixed(0)}%`);
const s = results.startup;
target('tanframe --version <= 3x node -e 0', s.versionMs / s.nodeMs, s.versionMs / s.nodeMs <= 3, `${(s.versionMs / s.nodeMs).toFixed(2)}x (${s.versionMs.toFixed(0)} / ${s.nodeMs.toFixed(0)} ms)`);
target('bake of a 1-triangle GLB <= 5x node -e 0', s.oneTriangleMs / s.nodeMs, s.oneTriangleMs / s.nodeMs <= 5, `${(s.oneTriangleMs / s.nodeMs).toFixed(2)}x (${s.oneTriangleMs.toFixed(0)} / ${s.nodeMs.toFixed(0)} ms)`);
for (const [name, goal] of [['40 x 100k', 1.6], ['200 x 5k', 1.4]]) {
  const b = results.batch[name];
  target(`--jobs 2 >= ${goal}x faster than --jobs 1, ${name} GLBs`, b ? b.speedup : null, b ? b.speedup >= goal : null, b ? `${b.speedup.toFixed(2)}x` : undefined);
}
results.targets = targets;
console.log('\ntargets (ratios measured side by side in this run; other load on the machine moves them):');
for (const t of targets) console.log(`  ${t.pass === null ? 'n/a ' : t.pass ? 'PASS' : 'MISS'}  ${t.name}: ${t.pass === null ? 'not measured in this run' + (quick ? ' (--quick)' : '') : t.shown}`);

fs.writeFileSync(path.join(here, 'results.json'), JSON.stringify(results, null, 2) + '\n');
console.log(`\nwrote ${path.relative(process.cwd(), path.join(here, 'results.json'))}`);
