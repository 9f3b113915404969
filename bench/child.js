// Runs one measured task in a fresh process and prints one JSON line on stdout — used by
// bench/run.js for peak-memory, allocation and in-process share figures.
//   node bench/child.js frames <mesh> <triangles> <method>
//   node bench/child.js cli <args...>        (the tanframe CLI in-process)
//   node bench/child.js alloc <args...>      (the CLI in-process, counting typed-array and ArrayBuffer bytes allocated)
//   node bench/child.js share <file.glb> <runs>   (diagnostics' share of an in-process bake of one GLB)
import { readFileSync } from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';

const mb = (kb) => Math.round((kb / 1024) * 10) / 10;
/**
 * Peak resident set of this process in KB. Linux's VmHWM belongs to the process image, so it
 * starts afresh at exec; getrusage's maxRSS can keep the parent's high-water mark from the fork
 * and is only the fallback elsewhere.
 */
function peakKb() {
  try {
    const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync('/proc/self/status', 'utf8'));
    if (m) return Number(m[1]);
  } catch {
    /* not Linux */
  }
  return process.resourceUsage().maxRSS;
}
const median = (xs) => { const s = [...xs].sort((a, b) => a - b); const m = s.length >> 1; return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2; };
const quietIo = { stdout: () => {}, stderr: (s) => process.stderr.write(s), cwd: process.cwd(), isTTY: false, env: process.env };

/**
 * Counts the bytes of every typed array and ArrayBuffer made with `new` from here on (views of
 * an existing buffer are not allocations and are not counted). Installed before the package
 * loads, so its `new Float32Array(n)` resolve to the counting subclasses.
 */
function countAllocations() {
  const counter = { bytes: 0, arrays: 0 };
  for (const name of ['Int8Array', 'Uint8Array', 'Int16Array', 'Uint16Array', 'Int32Array', 'Uint32Array', 'Float32Array', 'Float64Array']) {
    const Base = globalThis[name];
    const Counted = class extends Base {
      constructor(...args) {
        super(...args);
        // A view of an existing buffer (of any class: the buffers typed arrays make for themselves
        // are not CountedBuffer instances) is not an allocation.
        const tag = Object.prototype.toString.call(args[0]);
        if (tag !== '[object ArrayBuffer]' && tag !== '[object SharedArrayBuffer]') {
          counter.bytes += this.byteLength;
          counter.arrays++;
        }
      }
    };
    Object.defineProperty(Counted, 'name', { value: name });
    globalThis[name] = Counted;
  }
  const BaseBuffer = globalThis.ArrayBuffer;
  const CountedBuffer = class extends BaseBuffer {
    constructor(...args) { super(...args); counter.bytes += this.byteLength; counter.arrays++; }
  };
  Object.defineProperty(CountedBuffer, 'name', { value: 'ArrayBuffer' });
  globalThis.ArrayBuffer = CountedBuffer;
  return counter;
}

const [kind, ...rest] = process.argv.slice(2);
if (kind === 'frames') {
  const { computeFrames } = await import('../dist/index.js');
  const { makeMesh } = await import('./cases.js');
  const [mesh, tris, method] = rest;
  const m = makeMesh(mesh, Number(tris));
  let three = null;
  if (method === 'three') three = await import('./threeTangents.js');
  const base = process.memoryUsage().rss / 1024;
  const t = performance.now();
  if (three) three.threeTangents(m);
  else computeFrames(m, { method });
  const ms = performance.now() - t;
  console.log(JSON.stringify({ ms, maxRssMB: mb(peakKb()), baseRssMB: mb(base) }));
} else if (kind === 'cli' || kind === 'alloc') {
  const counter = kind === 'alloc' ? countAllocations() : null;
  const { main } = await import('../dist/cli/main.js');
  const faults0 = process.resourceUsage().minorPageFault;
  const t = performance.now();
  const code = await main(rest, quietIo);
  const ms = performance.now() - t;
  const minorFaults = process.resourceUsage().minorPageFault - faults0;
  console.log(JSON.stringify({ ms, code, maxRssMB: mb(peakKb()), minorFaults, allocMB: counter ? counter.bytes / 2 ** 20 : undefined, arrays: counter?.arrays }));
} else if (kind === 'share') {
  // The diagnostics' share of a bake, in one process: the whole in-process bake of the file
  // (read, solve, diagnose, encode, write; no worker) against diagnosePrimitive alone on the
  // same primitive, prepared the way solvePrimitive prepares it, after a solve of it (as in a
  // bake). Alternating runs, medians.
  const { processFile, readAsset, defaultProcessOptions, computeFrames } = await import('../dist/index.js');
  const { diagnosePrimitive } = await import('../dist/lib/diagnosePrimitive.js');
  const { uvOverlapAbsolute } = await import('../dist/mesh/tolerances.js');
  const [file, runsArg] = rest;
  const runs = Number(runsArg ?? 3);
  const options = defaultProcessOptions();
  const out = path.join(os.tmpdir(), `tanframe-share-${process.pid}.glb`);
  const job = { command: 'bake', input: file, output: out, format: null, dryRun: false, displayInput: file, displayOutput: out };
  const asset = await readAsset(file);
  const p = asset.primitives[0];
  const positions = p.attributes.POSITION.array, normals = p.attributes.NORMAL.array, uvs = p.attributes.TEXCOORD_0.array;
  const indices = p.indices;
  const normalized = new Float32Array(normals.length);
  for (let i = 0; i < normals.length; i += 3) {
    const l = Math.hypot(normals[i], normals[i + 1], normals[i + 2]);
    if (l > 0) { normalized[i] = normals[i] / l; normalized[i + 1] = normals[i + 1] / l; normalized[i + 2] = normals[i + 2] / l; }
  }
  const frames = computeFrames({ positions, normals: normalized, uvs, indices }, { method: options.method });
  const diagnose = () => diagnosePrimitive({}, {
    indices, positions, normals, uvs, storedTangents: null, vertexCount: positions.length / 3, triangleCount: indices.length / 3,
    computedTangents: frames.tangents, computedIndices: frames.indices, computedUndefined: frames.undefinedCorners,
    sourceVertex: frames.sourceVertex, uvEpsilon: options.uvEpsilon, toleranceDeg: options.tolerance,
    uvTouching: uvOverlapAbsolute(5126, false), marks: null,
  });
  const bakeMs = [], diagnoseMs = [];
  await processFile(job, options); diagnose(); // warm-up
  const { threadArena } = await import('../dist/mesh/arena.js');
  for (let r = 0; r < runs; r++) {
    // Each bake starts with an empty arena, as a one-file run of the command line does.
    threadArena().trim(0);
    globalThis.gc?.();
    let t = performance.now();
    await processFile(job, options);
    bakeMs.push(performance.now() - t);
    // In a bake the diagnostics follow the solve on the same thread and reuse its scratch
    // blocks, while processFile trims them when the file is done: an untimed solve first puts
    // them back, so the diagnostics do not pay for fresh pages a bake never gives them.
    computeFrames({ positions, normals: normalized, uvs, indices }, { method: options.method });
    globalThis.gc?.();
    t = performance.now();
    diagnose();
    diagnoseMs.push(performance.now() - t);
  }
  console.log(JSON.stringify({ bakeMs: median(bakeMs), diagnoseMs: median(diagnoseMs), share: median(diagnoseMs) / median(bakeMs), maxRssMB: mb(peakKb()) }));
} else {
  console.error('usage: node bench/child.js frames <mesh> <triangles> <method> | cli <args...> | alloc <args...> | share <file.glb> [runs]');
  process.exitCode = 2;
}
