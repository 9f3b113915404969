/**
 * `tanframe report` with a config file: shards of a run whose config gives one folder its own
 * limit (an override) and waives a gate for another merge to the whole run's report, because
 * each file is judged again by the gates and limits it was judged by and keeps its waivers.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { cornerUv, gridAsset, setCornerUv, writeGridGlb } from '../helpers/gridAsset.js';

let tmp = '';
const RUN = ['--fail-on', 'degenerate-uv', '--jobs', '1', '--file-timeout', '0', '--quiet'];

beforeAll(async () => {
  tmp = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-report-config-')));
  // Three folders, each with one grid holding one degenerate UV triangle (triangle 1's
  // corner 2 moved onto its corner 0), and a clean grid.
  for (const folder of ['strict', 'lenient', 'waived']) {
    const g = gridAsset(2);
    setCornerUv(g, 1, 2, cornerUv(g, 1, 0));
    await writeGridGlb(path.join(tmp, 'assets', folder), 'one', g);
    await writeGridGlb(path.join(tmp, 'assets', folder), 'clean', gridAsset(2));
  }
  fs.writeFileSync(path.join(tmp, 'tanframe.config.json'), JSON.stringify({
    schema: 'tanframe-config/1',
    overrides: [{ files: ['assets/lenient/**'], limits: { 'degenerate-uv': 1 } }],
    waivers: [{ files: ['assets/waived/**'], gates: ['degenerate-uv'], reason: 'known, fixed in the next drop' }],
  }));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

function readJson(file: string): any {
  return JSON.parse(fs.readFileSync(path.join(tmp, file), 'utf8'));
}

function withoutTimings(report: any): any {
  const r = structuredClone(report);
  delete r.summary.seconds;
  for (const f of r.files) delete f.seconds;
  return r;
}

describe('tanframe report over a run with a config file', () => {
  it('keepsEachFilesOverrideAndWaiverWhenMergingShards', async () => {
    const full = await runCli(['audit', 'assets', ...RUN, '--report', 'full.json'], tmp);
    const report = readJson('full.json');
    const byInput = new Map(report.files.map((f: any) => [f.input, f]));
    // The override lets the lenient file through; the waiver lets the waived one through with its reason.
    expect((byInput.get('assets/strict/one.glb') as any).gates).toEqual(['degenerate-uv']);
    expect((byInput.get('assets/lenient/one.glb') as any).gates).toEqual([]);
    expect((byInput.get('assets/waived/one.glb') as any).gates).toEqual([]);
    expect((byInput.get('assets/waived/one.glb') as any).waived).toEqual([{ gate: 'degenerate-uv', reason: 'known, fixed in the next drop' }]);
    expect(full.code).toBe(1);
    for (let k = 1; k <= 3; k++) await runCli(['audit', 'assets', ...RUN, '--shard', `${k}/3`, '--report', `shard-${k}.json`], tmp);
    const merged = await runCli(['report', 'shard-1.json', 'shard-2.json', 'shard-3.json', '--json', 'merged.json', '--quiet'], tmp);
    expect(merged.code).toBe(full.code);
    expect(withoutTimings(readJson('merged.json'))).toEqual(withoutTimings(report));
  });
});
