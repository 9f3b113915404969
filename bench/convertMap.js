// convert-map benchmark (plain Node on dist/; run `npm run build` first):
//   node bench/convertMap.js [--size 4096] [--triangles 100000] [--runs 3]
// Converts a tangent-space map of size x size texels to object space over a generated mesh of
// about `triangles` triangles (an indexed UV sphere, then a scan-like surface cut into UV
// islands), end to end through the CLI, and prints the time of each stage (medians).
// Goal (issue: convert-map): 4096 x 4096 on ~100k triangles within a few seconds on the
// project's 2-core machine. Speed goals live here, never in unit tests.
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { convertNormalMap, decodePng, encodePng, mapPartsForAsset, readAsset } from '../dist/index.js';
import { main as runCli } from '../dist/cli/index.js';
import { makeMesh } from './cases.js';
import { writeMeshGlb } from './glb.js';

function arg(name, fallback) {
  const i = process.argv.indexOf(name);
  return i >= 0 ? Number(process.argv[i + 1]) : fallback;
}
const SIZE = arg('--size', 4096);
const TRIANGLES = arg('--triangles', 100_000);
const RUNS = arg('--runs', 3);

const median = (xs) => { const s = [...xs].sort((a, b) => a - b); const m = s.length >> 1; return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2; };
/** Runs `fn`, pushing its wall time to `wall` and its CPU time (user + system) to `cpu`; returns its value. */
function timed(wall, cpu, fn) {
  const t0 = performance.now(), c0 = process.cpuUsage();
  const r = fn();
  const c = process.cpuUsage(c0);
  wall.push(performance.now() - t0);
  cpu.push((c.user + c.system) / 1000);
  return r;
}

/** A tangent-space map of smooth bumps, 8-bit RGB, encoded c = round((x * 0.5 + 0.5) * 255). */
function bumpMap(size) {
  const data = new Uint8Array(size * size * 3);
  const sx = new Float64Array(size), cy = new Float64Array(size);
  for (let i = 0; i < size; i++) {
    sx[i] = 0.5 * Math.sin((i + 0.5) * (40 * Math.PI / size));
    cy[i] = 0.5 * Math.cos((i + 0.5) * (28 * Math.PI / size));
  }
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) {
      const a = sx[x], b = cy[y], l = Math.sqrt(a * a + b * b + 1), o = (y * size + x) * 3;
      data[o] = Math.round((a / l * 0.5 + 0.5) * 255);
      data[o + 1] = Math.round((b / l * 0.5 + 0.5) * 255);
      data[o + 2] = Math.round((1 / l * 0.5 + 0.5) * 255);
    }
  }
  return { width: size, height: size, channels: 3, depth: 8, data };
}

const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-bench-convert-'));
try {
  console.log(`convert-map benchmark: ${SIZE} x ${SIZE} map, tangent -> object, ${os.cpus().length} cores, ${os.cpus()[0]?.model ?? ''}, Node ${process.version}`);
  const mapPath = path.join(tmp, 'bench_normal.png');
  fs.writeFileSync(mapPath, encodePng(bumpMap(SIZE)));
  console.log(`input map: ${(fs.statSync(mapPath).size / 2 ** 20).toFixed(1)} MiB PNG`);
  console.log('stage times in ms, median of runs: wall clock / CPU of this process (wall grows when other work shares the cores)');
  const stages = ['read', 'solve', 'decode', 'convert', 'encode', 'cli'];
  const head = ['read mesh', 'solve frames', 'decode PNG', 'convert', 'encode PNG', 'CLI end to end'];
  console.log(`mesh      triangles ${head.map((h) => h.padStart(16)).join('')}`);
  for (const kind of ['sphere', 'scan']) {
    const meshPath = path.join(tmp, `${kind}.glb`);
    const m = makeMesh(kind, TRIANGLES);
    writeMeshGlb(meshPath, m);
    const outPath = path.join(tmp, `${kind}_object.png`);
    const wall = Object.fromEntries(stages.map((k) => [k, []]));
    const cpu = Object.fromEntries(stages.map((k) => [k, []]));
    let covered = 0, conflicts = 0;
    for (let r = 0; r < RUNS; r++) {
      const t0 = performance.now();
      const c0 = process.cpuUsage();
      const asset = await readAsset(meshPath);
      const c1 = process.cpuUsage(c0);
      wall.read.push(performance.now() - t0);
      cpu.read.push((c1.user + c1.system) / 1000);
      const sel = timed(wall.solve, cpu.solve, () => mapPartsForAsset(asset, {
        imageName: mapPath, from: 'tangent', to: 'object', fromMethod: 'mikktspace', toMethod: 'mikktspace', uv: null, primitives: null,
      }));
      const bytes = new Uint8Array(fs.readFileSync(mapPath));
      const img = timed(wall.decode, cpu.decode, () => decodePng(bytes));
      const res = timed(wall.convert, cpu.convert, () => convertNormalMap(img, sel.parts, { from: 'tangent', to: 'object', inGreen: 'up', outGreen: 'up', padding: 8 }));
      covered = res.stats.covered; conflicts = res.stats.conflicts;
      timed(wall.encode, cpu.encode, () => encodePng(res.image));
      let printed = '';
      const t1 = performance.now(), c2 = process.cpuUsage();
      const code = await runCli(['convert-map', '--mesh', meshPath, '--in', mapPath, '--out', outPath, '--from', 'tangent', '--to', 'object', '--no-progress'],
        { stdout: (s) => { printed += s; }, stderr: (s) => process.stderr.write(s), cwd: tmp, isTTY: false, env: {} });
      const c3 = process.cpuUsage(c2);
      wall.cli.push(performance.now() - t1);
      cpu.cli.push((c3.user + c3.system) / 1000);
      if (code !== 0) throw new Error(`convert-map exited ${code}: ${printed}`);
    }
    const tris = m.indices.length / 3;
    const cells = stages.map((k) => `${median(wall[k]).toFixed(0)} / ${median(cpu[k]).toFixed(0)}`.padStart(16)).join('');
    console.log(`${kind.padEnd(8)} ${String(tris).padStart(10)} ${cells}`);
    console.log(`         texels covered ${covered.toLocaleString('en-US')} of ${(SIZE * SIZE).toLocaleString('en-US')}, conflicts ${conflicts.toLocaleString('en-US')}`);
  }
} finally {
  fs.rmSync(tmp, { recursive: true, force: true });
}
