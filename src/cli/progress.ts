/**
 * The batch progress bar on stderr: one line redrawn in place, shown only on a terminal,
 * never in CI logs, never with --quiet or --no-progress.
 */

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

/** The text of one progress line (no carriage return): bar, count, and the last file's label. */
export function progressLine(done: number, total: number, label: string): string {
  const filled = total > 0 ? Math.round((BAR * done) / total) : BAR;
  const bar = '\u2588'.repeat(filled) + '\u00b7'.repeat(BAR - filled);
  const shown = label.length > LABEL ? '\u2026' + label.slice(label.length - LABEL + 1) : label;
  return `tanframe [${bar}] ${done}/${total} files  ${shown}`;
}

/** A progress bar writing to `write` (stderr); `update` after each file, `finish` at the end. */
export class ProgressBar {
  private last = -Infinity;
  private drawn = false;
  constructor(
    private readonly write: (s: string) => void,
    private readonly total: number,
    private readonly now: () => number = () => performance.now(),
  ) {}

  /** Shows `done` of the total, `label` the file just finished. Redraws at most every REDRAW_MS and on the last file. */
  update(done: number, label: string): void {
    const t = this.now();
    if (done < this.total && t - this.last < REDRAW_MS) return;
    this.last = t;
    this.write(`\r\u001b[2K${progressLine(done, this.total, label)}`);
    this.drawn = true;
  }

  /** Clears the line so the summary starts on a clean line. */
  finish(): void {
    if (this.drawn) this.write('\r\u001b[2K');
    this.drawn = false;
  }
}
