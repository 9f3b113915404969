/**
 * `tanframe report`: shards of one run merged give the report of the whole run (the same
 * JSON except timings, the same JUnit, the same exit status); parts of different runs are
 * refused with exit 2 naming the difference.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { cornerUv, gridAsset, setCornerUv, writeGridGlb } from '../helpers/gridAsset.js';

let tmp = '';
// --file-timeout 0 with --jobs 1 runs every file on the test's own thread (no workers to start).
const GATES = ['--fail-on', 'degenerate-uv,uv-overlap,invalid-values', '--file-timeout', '0'];

beforeAll(async () => {
  tmp = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-report-')));
  // assets/: 7 files over two folders. Clean grids; one with a degenerate UV triangle
  // (corner 2 of triangle 3 moved onto corner 0); one with two triangles whose UVs partly
  // overlap (triangle 0's corner 1 pushed into quad 1); one file that is not a GLB.
  const assets = path.join(tmp, 'assets');
  for (const name of ['a', 'c', 'e']) await writeGridGlb(assets, name, gridAsset(2));
  await writeGridGlb(path.join(assets, 'sub'), 'f', gridAsset(3));
  const degenerate = gridAsset(2);
  setCornerUv(degenerate, 3, 2, cornerUv(degenerate, 3, 0));
  await writeGridGlb(assets, 'b', degenerate);
  const overlap = gridAsset(2);
  setCornerUv(overlap, 0, 1, [0.8, 0.9]);
  await writeGridGlb(path.join(assets, 'sub'), 'd', overlap);
  fs.writeFileSync(path.join(assets, 'sub', 'broken.glb'), 'not a glb at all');
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

function readJson(file: string): any {
  return JSON.parse(fs.readFileSync(path.join(tmp, file), 'utf8'));
}

/** The report without its timings (wall times differ from run to run). */
function withoutTimings(report: any): any {
  const r = structuredClone(report);
  delete r.summary.seconds;
  for (const f of r.files) delete f.seconds;
  return r;
}

/** JUnit text without its time attributes. */
function junitWithoutTimes(file: string): string {
  return fs.readFileSync(path.join(tmp, file), 'utf8').replace(/ time="[0-9.]+"/g, '');
}

describe('tanframe report', () => {
  it('mergesThreeShardsIntoTheReportOfOneRun', async () => {
    // 'missing' names nothing: every shard reports it failed, the merge keeps it once.
    const inputs = ['assets', 'missing'];
    const full = await runCli(['audit', ...inputs, ...GATES, '--jobs', '1', '--quiet', '--report', 'full.json', '--junit', 'full.xml'], tmp);
    for (let k = 1; k <= 3; k++) {
      await runCli(['audit', ...inputs, ...GATES, '--jobs', '1', '--quiet', '--shard', `${k}/3`, '--report', `shard-${k}.json`], tmp);
      expect(readJson(`shard-${k}.json`).files.length).toBeLessThan(readJson('full.json').files.length);
    }
    const merged = await runCli(['report', 'shard-1.json', 'shard-2.json', 'shard-3.json', '--json', 'merged.json', '--junit', 'merged.xml', '--html', 'merged.html'], tmp);
    const fullReport = readJson('full.json');
    // The whole run has gates tripped and a failed file; the merge exits as it did.
    expect(fullReport.files.some((f: any) => f.gates.length > 0)).toBe(true);
    expect(fullReport.files.filter((f: any) => f.status === 'failed').map((f: any) => f.input)).toEqual(['assets/sub/broken.glb', 'missing']);
    expect(merged.code).toBe(full.code);
    expect(merged.code).not.toBe(0);
    expect(withoutTimings(readJson('merged.json'))).toEqual(withoutTimings(fullReport));
    expect(junitWithoutTimes('merged.xml')).toBe(junitWithoutTimes('full.xml'));
    // The summary is printed, with the whole run's counts; failures go to stderr as in a run.
    expect(merged.stdout).toContain('total: 8 files');
    expect(merged.stderr).toContain('tanframe: assets/sub/broken.glb:');
    expect(fs.readFileSync(path.join(tmp, 'merged.html'), 'utf8')).toContain('assets/sub/d.glb');
  });

  it('sortsFilesByInputWhateverTheOrderOfTheParts', async () => {
    const r = await runCli(['report', 'shard-3.json', 'shard-1.json', 'shard-2.json', '--json', 'reordered.json', '--quiet'], tmp);
    expect(r.stdout).toBe('');
    expect(withoutTimings(readJson('reordered.json'))).toEqual(withoutTimings(readJson('full.json')));
  });

  it('evaluatesGatesAndSummaryAgainFromThePerFileData', async () => {
    // Parts whose gates and summaries were lost still merge to the whole run's verdict.
    let gated = 0;
    for (let k = 1; k <= 3; k++) {
      const part = readJson(`shard-${k}.json`);
      gated += part.files.filter((f: any) => f.gates.length > 0).length;
      for (const f of part.files) f.gates = [];
      part.summary.gatesTripped = [];
      part.summary.triangles = 0;
      fs.writeFileSync(path.join(tmp, `stripped-${k}.json`), JSON.stringify(part));
    }
    expect(gated).toBeGreaterThan(0);
    const r = await runCli(['report', 'stripped-1.json', 'stripped-2.json', 'stripped-3.json', '--json', 'again.json', '--quiet'], tmp);
    expect(r.code).not.toBe(0);
    expect(withoutTimings(readJson('again.json'))).toEqual(withoutTimings(readJson('full.json')));
  });

  it('exitsZeroForACleanMergeAndOneForTrippedGates', async () => {
    const clean = ['assets/a.glb', 'assets/c.glb'];
    await runCli(['audit', clean[0], ...GATES, '--jobs', '1', '--quiet', '--report', 'clean-1.json'], tmp);
    await runCli(['audit', clean[1], ...GATES, '--jobs', '1', '--quiet', '--report', 'clean-2.json'], tmp);
    expect((await runCli(['report', 'clean-1.json', 'clean-2.json', '--quiet'], tmp)).code).toBe(0);
    await runCli(['audit', 'assets/b.glb', ...GATES, '--jobs', '1', '--quiet', '--report', 'gated.json'], tmp);
    const r = await runCli(['report', 'clean-1.json', 'gated.json'], tmp);
    expect(r.code).toBe(1);
    expect(r.stdout).toContain('gates tripped: degenerate-uv');
    const annotated = await runCli(['report', 'clean-1.json', 'gated.json', '--annotate', 'github', '--quiet'], tmp);
    expect(annotated.code).toBe(1);
    expect(annotated.stdout).toMatch(/^::error file=assets\/b\.glb,title=tanframe%3A degenerate-uv::gate degenerate-uv tripped%0A[^\n]*\n$/);
  });

  it('refusesPartsOfDifferentRunsNamingTheDifference', async () => {
    await runCli(['audit', 'assets', ...GATES, '--tolerance', '2', '--jobs', '1', '--quiet', '--shard', '2/3', '--report', 'other-tol.json'], tmp);
    const tol = await runCli(['report', 'shard-1.json', 'other-tol.json', '--json', 'never.json'], tmp);
    expect(tol.code).toBe(2);
    expect(tol.stderr).toBe('tanframe: other-tol.json and shard-1.json are not parts of one run: option tolerance 2 in other-tol.json, 1 in shard-1.json\n');
    expect(fs.existsSync(path.join(tmp, 'never.json'))).toBe(false);

    const version = readJson('shard-2.json');
    version.tool.version = '99.0.0';
    fs.writeFileSync(path.join(tmp, 'other-version.json'), JSON.stringify(version));
    const v = await runCli(['report', 'shard-1.json', 'other-version.json'], tmp);
    expect(v.code).toBe(2);
    expect(v.stderr).toContain('tool version "99.0.0" in other-version.json');

    await runCli(['audit', 'assets', ...GATES, '--method', 'lengyel', '--jobs', '1', '--quiet', '--shard', '2/3', '--report', 'other-method.json'], tmp);
    const m = await runCli(['report', 'shard-1.json', 'other-method.json'], tmp);
    expect(m.code).toBe(2);
    expect(m.stderr).toContain('method "lengyel" in other-method.json, "mikktspace" in shard-1.json');

    await runCli(['bake', 'assets', ...GATES, '--dry-run', '--jobs', '1', '--quiet', '--shard', '2/3', '--report', 'other-command.json'], tmp);
    const c = await runCli(['report', 'shard-1.json', 'other-command.json'], tmp);
    expect(c.code).toBe(2);
    expect(c.stderr).toMatch(/not parts of one run: (command|option)/);

    await runCli(['audit', 'assets', ...GATES, '--jobs', '1', '--quiet', '--shard', '2/4', '--report', 'other-count.json'], tmp);
    const n = await runCli(['report', 'shard-1.json', 'other-count.json'], tmp);
    expect(n.code).toBe(2);
    expect(n.stderr).toContain('shard count 4 in other-count.json, 3 in shard-1.json');
  });

  it('neverWritesOverAReportItMerges', async () => {
    const before = fs.readFileSync(path.join(tmp, 'shard-2.json'), 'utf8');
    const r = await runCli(['report', 'shard-1.json', 'shard-2.json', '--json', './shard-2.json'], tmp);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('tanframe: --json ./shard-2.json would write over one of the reports to merge\n');
    expect(fs.readFileSync(path.join(tmp, 'shard-2.json'), 'utf8')).toBe(before);
  });

  it('refusesAFileMergedTwiceAndWhatIsNotAReport', async () => {
    const twice = await runCli(['report', 'shard-1.json', 'shard-2.json', 'shard-1.json'], tmp);
    expect(twice.code).toBe(2);
    expect(twice.stderr).toMatch(/^tanframe: assets\/\S+ is in both shard-1\.json and shard-1\.json/);
    fs.writeFileSync(path.join(tmp, 'not-json.json'), '{ nope');
    fs.writeFileSync(path.join(tmp, 'not-report.json'), JSON.stringify({ schema: 'something-else/1' }));
    const cases: [string, string][] = [
      ['not-json.json', 'tanframe: not-json.json: not a tanframe report (not JSON)\n'],
      ['not-report.json', 'tanframe: not-report.json: not a tanframe report (schema "something-else/1", expected "tanframe-report/1")\n'],
      ['absent.json', 'tanframe: cannot read the report absent.json: ENOENT\n'],
    ];
    for (const [file, message] of cases) {
      const r = await runCli(['report', 'shard-1.json', file], tmp);
      expect(r.code, file).toBe(2);
      expect(r.stderr).toBe(message);
      expect(r.stdout).toBe('');
    }
  });
});
