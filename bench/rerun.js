// The rerun of `tanframe bake` over the demo (examples/harbor-props) and the shared glTF samples
// (../shared/datasets/gltf-samples), copied into a temporary folder: a first run into an empty
// output folder, then a rerun with nothing changed (every file up-to-date), then --force.
// Whole process (spawned CLI, wall time) and the run's own `summary.seconds`, median of rounds.
//   node bench/rerun.js [--rounds 3] [--jobs n]     (build first: npm run build)
import { spawn } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';

const here = path.dirname(fileURLToPath(import.meta.url));
const repo = path.resolve(here, '..');
const samples = path.resolve(repo, '../shared/datasets/gltf-samples');
const arg = (name, dflt) => { const i = process.argv.indexOf(name); return i > 0 ? process.argv[i + 1] : dflt; };
const rounds = Number(arg('--rounds', '3'));
const jobs = arg('--jobs', null);
if (!fs.existsSync(samples)) {
  console.log(`SKIPPED: rerun bench: glTF sample assets not found at ${samples}`);
  process.exit(0);
}
const median = (xs) => { const s = [...xs].sort((a, b) => a - b); const m = s.length >> 1; return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2; };

function bake(src, out, report, extra = []) {
  return new Promise((resolve, reject) => {
    const t = performance.now();
    const args = [path.join(repo, 'bin/tanframe.js'), 'bake', src, '-o', out, '--quiet', '--report', report, ...(jobs ? ['--jobs', jobs] : []), ...extra];
    const p = spawn(process.execPath, args, { stdio: ['ignore', 'ignore', 'inherit'] });
    p.on('error', reject);
    p.on('close', (code) => {
      const wallMs = performance.now() - t;
      const r = JSON.parse(fs.readFileSync(report, 'utf8'));
      resolve({ wallMs, code, seconds: r.summary.seconds, upToDate: r.summary.upToDate ?? 0, files: r.summary.files });
    });
  });
}

const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-bench-rerun-'));
process.env.TANFRAME_CACHE_DIR = path.join(tmp, 'cache'); // the stamp cache of these runs, not the user's
try {
  const src = path.join(tmp, 'assets');
  fs.cpSync(path.join(repo, 'examples/harbor-props'), path.join(src, 'harbor-props'), { recursive: true });
  fs.cpSync(samples, path.join(src, 'gltf-samples'), { recursive: true });
  const report = path.join(tmp, 'report.json');
  const first = [], rerun = [], force = [];
  let files = 0, upToDate = 0;
  for (let i = 0; i < rounds; i++) {
    const out = path.join(tmp, `out${i}`);
    first.push(await bake(src, out, report));
    const r = await bake(src, out, report);
    rerun.push(r);
    files = r.files;
    upToDate = r.upToDate;
    force.push(await bake(src, out, report, ['--force']));
  }
  const row = (name, runs) => {
    const w = median(runs.map((r) => r.wallMs)) / 1000, s = median(runs.map((r) => r.seconds));
    console.log(`${name.padEnd(22)} ${w.toFixed(2).padStart(8)} s ${s.toFixed(2).padStart(10)} s`);
    return { w, s };
  };
  console.log(`bake of ${files} files (demo + glTF samples), median of ${rounds} rounds, ${os.availableParallelism()} cores, load average ${os.loadavg()[0].toFixed(1)}`);
  console.log(`${'run'.padEnd(22)} ${'process'.padStart(10)} ${'summary.seconds'.padStart(12)}`);
  const a = row('first (empty -o)', first);
  const b = row(`rerun (${upToDate} up-to-date)`, rerun);
  row('--force', force);
  console.log(`rerun / first: whole process ${(b.w / a.w).toFixed(3)}, inside the run ${(b.s / a.s).toFixed(3)}`);
} finally {
  fs.rmSync(tmp, { recursive: true, force: true });
}
