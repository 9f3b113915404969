// Child process of test/helpers/costGrowth.ts: runs one task on one size and prints what it
// cost. Argument 1 is a JSON spec { module, export, dir, args, warmupDir }. A .ts task module
// is loaded through the TypeScript hooks (tsLoader.mjs).
// Sequence: optional untimed warm-up on `warmupDir` (JIT), gc, reset of the peak-RSS mark
// (Linux: "5" to /proc/self/clear_refs), base RSS, the timed run, peak RSS (VmHWM, else
// process.resourceUsage().maxRSS). Output: one line `COST-RESULT <json>` on stdout.
import { readFileSync, writeFileSync } from 'node:fs';
import { register } from 'node:module';

const spec = JSON.parse(process.argv[2]);
// TypeScript task modules load through the test hooks (seconds per process); .mjs/.js directly.
if (spec.module.endsWith('.ts')) register(new URL('./tsLoader.mjs', import.meta.url));

/** VmHWM / VmRSS in bytes from /proc/self/status, or null off Linux. */
function procKb(field) {
  try {
    const m = new RegExp(`^${field}:\\s+(\\d+) kB`, 'm').exec(readFileSync('/proc/self/status', 'utf8'));
    return m ? Number(m[1]) * 1024 : null;
  } catch {
    return null;
  }
}

function outcome(value) {
  if (value && typeof value === 'object' && typeof value.refused === 'string') return { refused: value.refused, detail: value.detail ?? null };
  return { refused: null, detail: null };
}

function errorOutcome(err) {
  // A TanframeError carries a stable code; anything else (or 'internal') is a failure.
  if (err && err.name === 'TanframeError' && typeof err.code === 'string' && err.code !== 'internal') {
    return { refused: err.code, detail: String(err.message).split('\n')[0] };
  }
  return { error: String(err?.stack ?? err) };
}

const mod = await import(spec.module);
const fn = mod[spec.export];
if (typeof fn !== 'function') throw new Error(`cost task: ${spec.module} has no export ${spec.export}`);

if (spec.warmupDir) {
  try { await fn(spec.warmupDir, ...spec.args); } catch { /* the timed run reports it */ }
}
globalThis.gc?.();
let resetPeak = false;
try {
  writeFileSync('/proc/self/clear_refs', '5');
  resetPeak = true;
} catch { /* not Linux, or not allowed: the peak then includes the warm-up */ }
const baseRss = procKb('VmRSS') ?? process.memoryUsage().rss;
const t0 = performance.now();
let result;
try {
  result = outcome(await fn(spec.dir, ...spec.args));
} catch (err) {
  result = errorOutcome(err);
}
const ms = performance.now() - t0;
const peakRss = (resetPeak ? procKb('VmHWM') : null) ?? process.resourceUsage().maxRSS * 1024;
process.stdout.write(`\nCOST-RESULT ${JSON.stringify({ ms, baseRss, peakRss, ...result })}\n`);
process.exit(0);
