// Progress: the bar only on a terminal outside CI, fitted to the terminal's width; in a log,
// one record at least every 10 s of a longer batch; neither with --quiet / --no-progress.
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { gridAsset, writeGridGlb } from '../helpers/gridAsset.js';
import {
  PROGRESS_RECORD_S, ProgressBar, ProgressRecords, progressLine, progressRecord, progressRecordsWanted, progressWanted, type ProgressClock,
} from '../../src/cli/progress.js';

/** A clock the test moves by hand; `every` keeps its callbacks for `fire`. */
function fakeClock(): ProgressClock & { t: number; fire(): void; timers: number } {
  const fns = new Set<() => void>();
  return {
    t: 0,
    timers: 0,
    now() { return this.t; },
    every(_ms, fn) {
      fns.add(fn);
      this.timers = fns.size;
      return () => { fns.delete(fn); this.timers = fns.size; };
    },
    fire() { for (const fn of [...fns]) fn(); },
  };
}

/** Length in code points (the bar's cells and the ellipsis are one column each). */
const width = (s: string) => [...s].length;

describe('progressLine', () => {
  it('drawsTheShareDoneAndTheLastFile', () => {
    // 3 of 12 on a 24-cell bar: 6 cells filled.
    expect(progressLine(3, 12, 'props/a.glb')).toBe(`tanframe [${'\u2588'.repeat(6)}${'\u00b7'.repeat(18)}] 3/12 files  props/a.glb`);
    expect(progressLine(12, 12, 'x')).toContain(`[${'\u2588'.repeat(24)}] 12/12`);
  });

  it('showsAFileNamesControlCharactersAsVisibleEscapes', () => {
    expect(progressLine(1, 2, 'a\u001b]0;title\u0007.glb')).toBe(`tanframe [${'\u2588'.repeat(12)}${'\u00b7'.repeat(12)}] 1/2 files  a\\u001b]0;title\\u0007.glb`);
  });

  it('keepsTheEndOfALongPath', () => {
    const label = 'a/'.repeat(40) + 'last.glb';
    const line = progressLine(1, 2, label);
    expect(line.endsWith('\u2026' + label.slice(label.length - 47))).toBe(true);
  });
});

describe('progressLine fitted to the terminal', () => {
  const label = 'assets/characters/harbour_master/harbour_master_lod0.glb';

  it('neverReachesTheLastColumnAtAnyWidth', () => {
    for (let columns = 1; columns <= 200; columns++) {
      for (const [done, total] of [[3, 12], [999, 1000], [123456, 1234567]]) {
        const line = progressLine(done, total, label, columns);
        expect(width(line), `${columns} columns: ${line}`).toBeLessThanOrEqual(Math.max(0, columns - 1));
      }
    }
  });

  it('cutsTheLabelFirstThenNarrowsTheBarThenLeavesThemOut', () => {
    // Wide: the whole bar and up to 48 characters of label (its end kept).
    expect(progressLine(3, 12, label, 200)).toBe(progressLine(3, 12, label));
    // 80 columns: the whole 24-cell bar, the label cut to fit 79.
    const at80 = progressLine(3, 12, label, 80);
    expect(at80.startsWith(`tanframe [${'\u2588'.repeat(6)}${'\u00b7'.repeat(18)}] 3/12 files  \u2026`)).toBe(true);
    expect(width(at80)).toBe(79);
    expect(at80.endsWith('harbour_master_lod0.glb')).toBe(true);
    // 50 columns: a narrower bar (17 cells) with an 8-character label.
    expect(progressLine(3, 12, label, 50)).toMatch(/^tanframe \[[\u2588\u00b7]{17}\] 3\/12 files  \u2026od0.glb$/u);
    // 40 columns: the bar alone; 30: the count alone.
    expect(progressLine(3, 12, label, 40)).toMatch(/^tanframe \[[\u2588\u00b7]{17}\] 3\/12 files$/u);
    expect(progressLine(3, 12, label, 30)).toBe('tanframe 3/12 files');
  });

  it('redrawsTheBarAtTheWidthOfTheMomentAfterAResize', () => {
    let out = '';
    let columns = 120;
    const bar = new ProgressBar((s) => { out += s; }, 2, () => 0, () => columns);
    bar.update(1, label);
    columns = 40;
    bar.update(2, label);
    const draws = out.split('\r\u001b[2K').filter(Boolean);
    expect(draws).toEqual([progressLine(1, 2, label, 120), progressLine(2, 2, label, 40)]);
    expect(width(draws[1])).toBeLessThanOrEqual(39);
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

describe('progressRecordsWanted', () => {
  it('inALogOrInCiUnlessSilenced', () => {
    expect(progressRecordsWanted(false, {}, {})).toBe(true);
    expect(progressRecordsWanted(true, { CI: 'true' }, {})).toBe(true); // CI with a terminal: records, no bar
    expect(progressRecordsWanted(true, {}, {})).toBe(false); // the bar is shown instead
    expect(progressRecordsWanted(false, {}, { progress: false })).toBe(false);
    expect(progressRecordsWanted(false, {}, { quiet: true })).toBe(false);
  });
});

describe('ProgressRecords', () => {
  it('printsNothingInTheFirst10SecondsThenOneRecordEvery10Seconds', () => {
    const clock = fakeClock();
    const lines: string[] = [];
    const records = new ProgressRecords((s) => lines.push(s), 5, clock);
    expect(clock.timers).toBe(1);
    clock.t = 4000;
    records.update({ status: 'ok', gates: [] });
    clock.t = 9999;
    clock.fire();
    expect(lines).toEqual([]); // a batch shorter than 10 s prints nothing
    clock.t = 10_000;
    clock.fire();
    expect(lines).toEqual([progressRecord(1, 5, 0, 0, 10) + '\n']);
    expect(lines[0]).toBe('tanframe progress: 1 of 5 files done, 0 failed, 0 gated (10 s)\n');
    // A file finishing between ticks is counted; failures and gated files so far are shown.
    clock.t = 12_000;
    records.update({ status: 'failed', gates: [] });
    records.update({ status: 'ok', gates: ['degenerate-uv'] });
    clock.t = 19_000;
    clock.fire();
    expect(lines).toHaveLength(1);
    clock.t = 20_100;
    clock.fire();
    clock.fire(); // a second tick at the same moment: still one record
    expect(lines).toEqual([progressRecord(1, 5, 0, 0, 10) + '\n', 'tanframe progress: 3 of 5 files done, 1 failed, 1 gated (20 s)\n']);
    // One file that takes 35 s: one record when the loop wakes up, the next on the 10 s grid.
    clock.t = 55_000;
    clock.fire();
    clock.t = 59_999;
    clock.fire();
    expect(lines).toHaveLength(3);
    clock.t = 60_000;
    records.update({ status: 'ok', gates: [] }); // a record is due: written after a file too
    expect(lines).toHaveLength(4);
    for (const l of lines) expect(l).toMatch(/^tanframe progress: [^\r\u001b]*\n$/);
    records.finish();
    expect(clock.timers).toBe(0);
  });

  it('recordsAtLeastEvery10SecondsOfALongBatch', () => {
    // Ticks at the timer's pace over 2 minutes: never more than 10 s without a record.
    const clock = fakeClock();
    const at: number[] = [];
    const records = new ProgressRecords(() => at.push(clock.t), 1000, clock);
    for (clock.t = 0; clock.t <= 120_000; clock.t += 250) clock.fire();
    records.finish();
    expect(at.length).toBe(120_000 / (PROGRESS_RECORD_S * 1000));
    let last = 0;
    for (const t of at) {
      expect(t - last).toBeLessThanOrEqual(PROGRESS_RECORD_S * 1000);
      last = t;
    }
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

  it('fitsTheBarToTheTerminalsWidth', async () => {
    const tty = await runCli(['audit', 'in', '--jobs', '1'], tmp, {}, { stderrIsTTY: true, columns: 30 });
    const draws = tty.stderr.split('\r\u001b[2K').filter(Boolean);
    expect(draws.length).toBeGreaterThan(0);
    for (const d of draws) expect(width(d)).toBeLessThanOrEqual(29);
  });

  it('printsRecordsInALogWhenTheBatchRunsLongerThan10Seconds', async () => {
    // A clock that moves 6 s each time it is read: the batch "lasts" longer than 10 s.
    const slow = (): ProgressClock => {
      let t = 0;
      return { now: () => (t += 6000) - 6000, every: () => () => {} };
    };
    const log = await runCli(['audit', 'in', '--jobs', '1', '--file-timeout', '0'], tmp, {}, { stderrIsTTY: false, clock: slow() });
    expect(log.code).toBe(0);
    const lines = log.stderr.split('\n').filter(Boolean);
    expect(lines.length).toBeGreaterThan(0);
    for (const l of lines) expect(l).toMatch(/^tanframe progress: [12] of 2 files done, 0 failed, 0 gated \(\d+ s\)$/);
    expect(log.stdout).not.toContain('progress');
    for (const extra of [['--no-progress'], ['--quiet']]) {
      const r = await runCli(['audit', 'in', '--jobs', '1', '--file-timeout', '0', ...extra], tmp, {}, { stderrIsTTY: false, clock: slow() });
      expect(r.stderr, extra[0]).toBe('');
    }
  });
});
