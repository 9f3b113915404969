// Preloaded into a benchmarked process (`node --import ./bench/exitStats.js ...`): at exit,
// writes the process's peak RSS (Linux VmHWM, worker threads included), its minor page faults
// and its CPU time (user + system, every thread) as one JSON line to the file named by TANFRAME_BENCH_STATS.
import { readFileSync, writeFileSync } from 'node:fs';

const file = process.env.TANFRAME_BENCH_STATS;
if (file) {
  process.on('exit', () => {
    let peakKb = process.resourceUsage().maxRSS;
    try {
      const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync('/proc/self/status', 'utf8'));
      if (m) peakKb = Number(m[1]);
    } catch {
      /* not Linux */
    }
    const u = process.resourceUsage();
    writeFileSync(file, JSON.stringify({ peakRssMB: Math.round(peakKb / 102.4) / 10, minorFaults: u.minorPageFault, cpuMs: (u.userCPUTime + u.systemCPUTime) / 1000 }) + '\n');
  });
}
