// How far two threads scale on this machine, by kind of work: the ceiling a `--jobs 2` batch can
// reach. Each load runs alone in one worker thread, then in two side by side; the figure is the
// throughput of two over one (2.0 = perfect). Arithmetic stays in registers; random access walks a
// 64 MB Float64Array (past the caches, like a solve's adjacency and sums); fresh pages allocates
// and touches new 16 MB arrays (first-touch page faults).
//   node bench/scaling.js
import { Worker, isMainThread, workerData, parentPort } from 'node:worker_threads';
import { fileURLToPath } from 'node:url';

const LOADS = {
  arithmetic() {
    let x = 0;
    for (let i = 0; i < 2e8; i++) x += Math.sqrt(i) * 1e-9;
    return x;
  },
  'random access'() {
    const a = new Float64Array(8e6);
    let s = 0, j = 1;
    for (let r = 0; r < 3; r++) {
      for (let i = 0; i < 8e6; i++) {
        j = (j * 1103515245 + 12345) & 0x7fffff;
        a[j] += i;
        s += a[(i * 7) & 0x7fffff];
      }
    }
    return s;
  },
  'fresh pages'() {
    let s = 0;
    for (let r = 0; r < 40; r++) {
      const a = new Float64Array(2e6);
      for (let i = 0; i < a.length; i += 512) a[i] = i;
      s += a[1024];
    }
    return s;
  },
};

if (!isMainThread) {
  const t = performance.now();
  const v = LOADS[workerData]();
  parentPort.postMessage({ ms: performance.now() - t, v });
}

function runIn(kind, n) {
  const script = fileURLToPath(import.meta.url);
  const t = performance.now();
  return Promise.all(Array.from({ length: n }, () => new Promise((resolve, reject) => {
    const w = new Worker(script, { workerData: kind });
    w.once('message', () => { resolve(); void w.terminate(); });
    w.once('error', reject);
  }))).then(() => performance.now() - t);
}

/** Two-thread scaling per kind of load, median of 3: { kind: { oneMs, twoMs, scaling } }. */
export async function measureThreadScaling() {
  const out = {};
  for (const kind of Object.keys(LOADS)) {
    const one = [], two = [];
    for (let i = 0; i < 3; i++) { one.push(await runIn(kind, 1)); two.push(await runIn(kind, 2)); }
    const med = (xs) => [...xs].sort((a, b) => a - b)[1];
    out[kind] = { oneMs: med(one), twoMs: med(two), scaling: (2 * med(one)) / med(two) };
  }
  return out;
}

if (isMainThread && process.argv[1] === fileURLToPath(import.meta.url)) {
  const r = await measureThreadScaling();
  for (const [k, v] of Object.entries(r)) console.log(`${k.padEnd(14)} one thread ${v.oneMs.toFixed(0)} ms, two side by side ${v.twoMs.toFixed(0)} ms: ${v.scaling.toFixed(2)}x throughput`);
}
