// render benchmark (plain Node on dist/; run `npm run build` first):
//   node bench/render.js [--triangles 100000] [--size 512] [--runs 7]
// Draws one front view, shaded, of an indexed UV sphere of about `triangles` triangles with
// baked frames and a 1024 x 1024 tangent-space bump map (renderSheet on a scene built in
// memory: the renderer alone), then the whole `render` command on the same mesh as a GLB for
// reference. Goal (issue 16): a 512 x 512 view of a 100k-triangle model in at most 0.3 s on
// the project's 2-core machine. Speed goals live here, never in unit tests.
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { computeFrames, renderSheet } from '../dist/index.js';
import { main as runCli } from '../dist/cli/index.js';
import { makeMesh } from './cases.js';
import { writeMeshGlb } from './glb.js';

function arg(name, fallback) {
  const i = process.argv.indexOf(name);
  return i >= 0 ? Number(process.argv[i + 1]) : fallback;
}
const TRIANGLES = arg('--triangles', 100_000);
const SIZE = arg('--size', 512);
const RUNS = arg('--runs', 7);
const GOAL_MS = 300;
const median = (xs) => { const s = [...xs].sort((a, b) => a - b); const m = s.length >> 1; return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2; };

/** A 1024 x 1024 bump map as the renderer holds images: RGBA, 16-bit samples. */
function bumpImage(size) {
  const data = new Uint16Array(size * size * 4);
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) {
      const a = 0.5 * Math.sin((x + 0.5) * (40 * Math.PI / size)), b = 0.5 * Math.cos((y + 0.5) * (28 * Math.PI / size));
      const l = Math.sqrt(a * a + b * b + 1), o = (y * size + x) * 4;
      data[o] = Math.round((a / l * 0.5 + 0.5) * 65535);
      data[o + 1] = Math.round((b / l * 0.5 + 0.5) * 65535);
      data[o + 2] = Math.round((1 / l * 0.5 + 0.5) * 65535);
      data[o + 3] = 65535;
    }
  }
  return { width: size, height: size, data };
}

const m = makeMesh('sphere', TRIANGLES);
const f = computeFrames(m, { method: 'mikktspace' });
const gather = (src, k) => { const out = new Float32Array(f.sourceVertex.length * k); for (let i = 0; i < f.sourceVertex.length; i++) for (let j = 0; j < k; j++) out[i * k + j] = src[f.sourceVertex[i] * k + j]; return out; };
const tris = f.indices.length / 3;
const scene = {
  primitives: [{
    positions: gather(m.positions, 3), normals: gather(m.normals, 3), uvs: [gather(m.uvs, 2)], tangents: f.tangents,
    referenceTangents: null, indices: f.indices, findings: null, material: 0,
  }],
  instances: [{ primitive: 0, matrix: new Float64Array([1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1]) }],
  materials: [{ baseColor: [0.8, 0.8, 0.8], baseColorTexture: null, normalTexture: { image: 0, texCoord: 0, wrapS: 10497, wrapT: 10497, transform: null }, normalScale: 1, doubleSided: false }],
  images: [bumpImage(1024)],
};
console.log(`render benchmark: ${SIZE} x ${SIZE} front view, shaded, sphere of ${tris.toLocaleString('en-US')} triangles, 1024^2 normal map, ${os.cpus().length} cores, ${os.cpus()[0]?.model ?? ''}, Node ${process.version}`);
const opts = { views: ['front'], modes: ['shaded'], size: SIZE, light: [30, 40] };
renderSheet(scene, opts); // warm-up
const times = [], cpu = [];
for (let r = 0; r < RUNS; r++) {
  if (globalThis.gc) globalThis.gc();
  const t = performance.now(), c0 = process.cpuUsage();
  renderSheet(scene, opts);
  const c = process.cpuUsage(c0);
  times.push(performance.now() - t);
  cpu.push((c.user + c.system) / 1000);
}
const ms = median(times);
const all = { ...opts, views: ['front', 'right', 'back', 'left'], modes: ['shaded', 'mismatch', 'findings'] };
const t1 = performance.now();
renderSheet(scene, all);
const sheetMs = performance.now() - t1;
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-bench-render-'));
let cliMs = 0;
try {
  const glb = path.join(tmp, 'sphere.glb');
  writeMeshGlb(glb, m);
  const t2 = performance.now();
  const code = await runCli(['render', glb, '-o', path.join(tmp, 'sheet.png'), '--quiet'], { stdout: () => {}, stderr: (s) => process.stderr.write(s), cwd: tmp, isTTY: false, env: {} });
  cliMs = performance.now() - t2;
  if (code !== 0) throw new Error(`render exited ${code}`);
} finally {
  fs.rmSync(tmp, { recursive: true, force: true });
}
console.log(`one view: median ${ms.toFixed(0)} ms wall (${median(cpu).toFixed(0)} ms CPU of this process) of ${RUNS} runs (min ${Math.min(...times).toFixed(0)}, max ${Math.max(...times).toFixed(0)})`);
console.log(`default sheet (4 views x 3 modes): ${sheetMs.toFixed(0)} ms; \`tanframe render\` end to end (read, solve, default sheet, PNG): ${cliMs.toFixed(0)} ms`);
console.log(`${ms <= GOAL_MS ? 'PASS' : 'MISS'}: ${SIZE} x ${SIZE} view of ${tris.toLocaleString('en-US')} triangles in ${ms.toFixed(0)} ms (goal <= ${GOAL_MS} ms)`);
