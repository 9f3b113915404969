// The progress bar: only on a terminal, never in CI, never with --quiet / --no-progress.
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { gridAsset, writeGridGlb } from '../helpers/gridAsset.js';
import { ProgressBar, progressLine, progressWanted } from '../../src/cli/progress.js';

describe('progressLine', () => {
  it('drawsTheShareDoneAndTheLastFile', () => {
    // 3 of 12 on a 24-cell bar: 6 cells filled.
    expect(progressLine(3, 12, 'props/a.glb')).toBe(`tanframe [${'\u2588'.repeat(6)}${'\u00b7'.repeat(18)}] 3/12 files  props/a.glb`);
    expect(progressLine(12, 12, 'x')).toContain(`[${'\u2588'.repeat(24)}] 12/12`);
  });

  it('keepsTheEndOfALongPath', () => {
    const label = 'a/'.repeat(40) + 'last.glb';
    const line = progressLine(1, 2, label);
    expect(line.endsWith('\u2026' + label.slice(label.length - 47))).toBe(true);
  });
});

describe('progressWanted', () => {
  it('onlyOnATerminalOutsideCiWithoutQuietOrNoProgress', () => {
    expect(progressWanted(true, {}, {})).toBe(true);
    expect(progressWanted(false, {}, {})).toBe(false);
    expect(progressWanted(true, { CI: 'true' }, {})).toBe(false);
    expect(progressWanted(true, { CI: '1' }, {})).toBe(false);
    expect(progressWanted(true, { CI: 'false' }, {})).toBe(true);
    expect(progressWanted(true, {}, { progress: false })).toBe(false);
    expect(progressWanted(true, {}, { quiet: true })).toBe(false);
  });
});

describe('ProgressBar', () => {
  it('redrawsAtMostEvery80msButAlwaysTheLastFileThenClears', () => {
    let out = '';
    let now = 0;
    const bar = new ProgressBar((s) => { out += s; }, 3, () => now);
    bar.update(1, 'a');
    now = 10;
    bar.update(2, 'b'); // too soon: skipped
    now = 20;
    bar.update(3, 'c'); // the last one: drawn
    bar.finish();
    const draws = out.split('\r\u001b[2K').filter(Boolean);
    expect(draws).toEqual([progressLine(1, 3, 'a'), progressLine(3, 3, 'c')]);
    expect(out.endsWith('\r\u001b[2K')).toBe(true);
  });
});

describe('progress through the CLI', () => {
  let tmp = '';
  beforeAll(async () => {
    tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-progress-'));
    await writeGridGlb(path.join(tmp, 'in'), 'a', gridAsset(2));
    await writeGridGlb(path.join(tmp, 'in'), 'b', gridAsset(2));
  });
  afterAll(() => {
    fs.rmSync(tmp, { recursive: true, force: true });
  });

  it('showsOnATerminalAndNowhereElse', async () => {
    const tty = await runCli(['audit', 'in', '--jobs', '1'], tmp, {}, { stderrIsTTY: true });
    expect(tty.code).toBe(0);
    expect(tty.stderr).toContain('2/2 files');
    expect(tty.stderr.endsWith('\r\u001b[2K')).toBe(true); // cleared before the summary
    expect(tty.stdout).not.toContain('files  ');
    for (const [env, extra] of [[{ CI: 'true' }, []], [{}, ['--no-progress']], [{}, ['--quiet']]] as const) {
      const r = await runCli(['audit', 'in', '--jobs', '1', ...extra], tmp, env, { stderrIsTTY: true });
      expect(r.code).toBe(0);
      expect(r.stderr, JSON.stringify({ env, extra })).toBe('');
    }
    const notTty = await runCli(['audit', 'in', '--jobs', '1'], tmp, {}, { stderrIsTTY: false });
    expect(notTty.stderr).toBe('');
  });
});
