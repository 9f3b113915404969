/**
 * Batch progress on stderr. On a terminal (outside CI): one bar redrawn in place, fitted to
 * the terminal's width. Elsewhere (a CI log, a file): a batch longer than 10 s prints a
 * one-line record at least every 10 s (files done of total, failures so far). Neither with
 * --quiet or --no-progress. The clock is injectable so tests need no real waiting.
 */
import { cleanText } from '../mesh/text.js';
import type { FileReport } from '../report/types.js';

/** Width of the bar in characters. */
const BAR = 24;
/** Longest file label shown (the end of the path is kept). */
const LABEL = 48;
/** Least time between two redraws, in ms (a redraw per file would flood a slow terminal). */
const REDRAW_MS = 80;

/**
 * Whether to show progress: stderr is a terminal, the environment is not CI (CI unset, empty,
 * 'false' or '0'), and neither --quiet nor --no-progress was given.
 */
export function progressWanted(stderrIsTTY: boolean, env: Record<string, string | undefined>, o: Record<string, any>): boolean {
  const ci = env.CI;
  const inCi = ci !== undefined && ci !== '' && ci !== 'false' && ci !== '0';
  return stderrIsTTY && !inCi && o.progress !== false && !o.quiet;
}

/** Narrowest bar drawn when the terminal is narrow (below it, the bar is left out). */
const MIN_BAR = 8;
/** Shortest file label worth showing; a narrower line leaves the label out. */
const MIN_LABEL = 8;

/** `label` cut to at most `max` characters (code points), keeping its end behind an ellipsis. */
function keepEnd(label: string, max: number): string {
  const chars = [...label];
  if (chars.length <= max) return label;
  return max <= 0 ? '' : '\u2026' + chars.slice(chars.length - max + 1).join('');
}

/**
 * The text of one progress line (no carriage return): bar, count, and the last file's label
 * (through the sanitiser: a file name's control characters never reach the terminal).
 * With `columns` (the terminal's width) the line fits in `columns - 1` characters, so it
 * never wraps: the label is cut first (keeping its end), then the bar narrows, then the
 * label and at last the bar are left out. Without it: a 24-cell bar and up to 48 characters
 * of label.
 */
export function progressLine(done: number, total: number, label: string, columns?: number): string {
  const count = `${done}/${total} files`;
  let barWidth = BAR;
  let labelMax = LABEL;
  if (columns !== undefined && Number.isFinite(columns) && columns > 0) {
    const room = Math.floor(columns) - 1;
    const fixed = 'tanframe [] '.length + count.length; // "tanframe [" bar "] " count, then "  " label
    labelMax = Math.min(LABEL, room - fixed - BAR - 2);
    if (labelMax < MIN_LABEL) {
      // A narrower bar and the shortest label; else the bar alone; else no bar.
      barWidth = Math.min(BAR, room - fixed - 2 - MIN_LABEL);
      labelMax = MIN_LABEL;
      if (barWidth < MIN_BAR) {
        barWidth = Math.min(BAR, room - fixed);
        labelMax = 0;
      }
      if (barWidth < MIN_BAR) {
        const plain = `tanframe ${count}`;
        return plain.length <= room ? plain : count.slice(0, Math.max(0, room));
      }
    }
  }
  const filled = total > 0 ? Math.round((barWidth * done) / total) : barWidth;
  const bar = '\u2588'.repeat(filled) + '\u00b7'.repeat(barWidth - filled);
  const head = `tanframe [${bar}] ${count}`;
  return labelMax > 0 ? `${head}  ${keepEnd(cleanText(label), labelMax)}` : head;
}

/** A progress bar writing to `write` (stderr); `update` after each file, `finish` at the end. */
export class ProgressBar {
  private last = -Infinity;
  private drawn = false;
  constructor(
    private readonly write: (s: string) => void,
    private readonly total: number,
    private readonly now: () => number = () => performance.now(),
    /** The terminal's width now (read at each redraw, so a resize is followed); undefined: unknown. */
    private readonly columns: () => number | undefined = () => undefined,
  ) {}

  /** Shows `done` of the total, `label` the file just finished. Redraws at most every REDRAW_MS and on the last file. */
  update(done: number, label: string): void {
    const t = this.now();
    if (done < this.total && t - this.last < REDRAW_MS) return;
    this.last = t;
    this.write(`\r\u001b[2K${progressLine(done, this.total, label, this.columns())}`);
    this.drawn = true;
  }

  /** Clears the line so the summary starts on a clean line. */
  finish(): void {
    if (this.drawn) this.write('\r\u001b[2K');
    this.drawn = false;
  }
}

/** Seconds between two progress records in a log (the most a log stays silent in a batch). */
export const PROGRESS_RECORD_S = 10;
/** How often the record timer looks at the clock, in ms (a record is at most this late). */
const RECORD_TICK_MS = 250;

/** The clock progress records read; tests pass a fake one. */
export interface ProgressClock {
  /** Milliseconds on a monotonic clock. */
  now(): number;
  /** Calls `fn` every `ms` milliseconds until the returned function is called; never keeps the process alive. */
  every(ms: number, fn: () => void): () => void;
}

/** The real clock: performance.now and an unref'd interval timer. */
export const systemClock: ProgressClock = {
  now: () => performance.now(),
  every: (ms, fn) => {
    const t = setInterval(fn, ms);
    t.unref();
    return () => clearInterval(t);
  },
};

/**
 * Whether to print progress records: progress is not silenced (--quiet, --no-progress) and
 * the bar is not shown (stderr is not a terminal, or the environment is CI).
 */
export function progressRecordsWanted(stderrIsTTY: boolean, env: Record<string, string | undefined>, o: Record<string, any>): boolean {
  return o.progress !== false && !o.quiet && !progressWanted(stderrIsTTY, env, o);
}

/** The text of one progress record (no newline). */
export function progressRecord(done: number, total: number, failed: number, gated: number, seconds: number): string {
  return `tanframe progress: ${done} of ${total} files done, ${failed} failed, ${gated} gated (${Math.floor(seconds)} s)`;
}

/**
 * Progress records for a log: one line each, with no control characters, written when the
 * batch has run PROGRESS_RECORD_S seconds and every PROGRESS_RECORD_S seconds after that
 * (at whole multiples of it from the start, checked every RECORD_TICK_MS and after each file),
 * so a batch shorter than that prints none. `update` after each file, `finish` at the end.
 */
export class ProgressRecords {
  private done = 0;
  private failed = 0;
  private gated = 0;
  private readonly started: number;
  private next: number;
  private readonly stop: () => void;

  constructor(
    private readonly write: (s: string) => void,
    private readonly total: number,
    private readonly clock: ProgressClock = systemClock,
  ) {
    this.started = clock.now();
    this.next = this.started + PROGRESS_RECORD_S * 1000;
    this.stop = clock.every(RECORD_TICK_MS, () => this.tick());
  }

  /** Counts one more finished file (`report` says whether it failed or tripped a gate). */
  update(report: Pick<FileReport, 'status' | 'gates'>): void {
    this.done++;
    if (report.status === 'failed') this.failed++;
    else if (report.gates.length > 0) this.gated++;
    this.tick();
  }

  /** Writes a record when one is due. */
  tick(): void {
    const t = this.clock.now();
    if (t < this.next) return;
    const step = PROGRESS_RECORD_S * 1000;
    // One record even if the clock jumped several steps; the next is due at the next whole step.
    this.next += step * (Math.floor((t - this.next) / step) + 1);
    this.write(progressRecord(this.done, this.total, this.failed, this.gated, (t - this.started) / 1000) + '\n');
  }

  /** Stops the timer (no record after the batch). */
  finish(): void {
    this.stop();
  }
}
