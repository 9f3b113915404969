// Runs one measured task in a fresh process and prints one JSON line on stdout:
// { ms, maxRssMB, baseRssMB } — used by bench/run.js for peak-memory figures.
//   node bench/child.js frames <mesh> <triangles> <method>
//   node bench/child.js cli <args...>        (the tanframe CLI in-process)
import { computeFrames } from '../dist/index.js';
import { main } from '../dist/cli/main.js';
import { makeMesh } from './cases.js';

import { readFileSync } from 'node:fs';

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
const [kind, ...rest] = process.argv.slice(2);
if (kind === 'frames') {
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
} else if (kind === 'cli') {
  const t = performance.now();
  const code = await main(rest, {
    stdout: () => {}, stderr: (s) => process.stderr.write(s), cwd: process.cwd(), isTTY: false, env: process.env,
  });
  const ms = performance.now() - t;
  console.log(JSON.stringify({ ms, code, maxRssMB: mb(peakKb()) }));
} else {
  console.error('usage: node bench/child.js frames <mesh> <triangles> <method> | cli <args...>');
  process.exitCode = 2;
}
