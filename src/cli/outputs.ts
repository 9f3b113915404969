/**
 * The report files besides the JSON one: UV pictures (--uv-maps), the JUnit file (--junit)
 * and the HTML page (--html), shared by `bake` and `audit`.
 */
import * as path from 'node:path';
import { writeFilesAtomic } from '../io/files.js';
import { cleanText } from '../mesh/text.js';
import type { RunRequest, WritePlan } from '../lib/writePlan.js';
import type { HtmlPicture, HtmlView } from '../report/html.js';
import type { Report } from '../report/types.js';
import type { ViewSheet } from '../lib/viewSheets.js';
import type { UvPicture } from '../report/uvPicture.js';
import type { CliIo } from './shared.js';

/**
 * The files and folders the user named for reports (--report, --junit, --html, --uv-maps), as
 * the write plan takes them. Register further named outputs (--views, the state file) here.
 */
export function namedWrites(o: Record<string, any>, io: CliIo): Pick<RunRequest, 'files' | 'folders'> {
  const files: RunRequest['files'] = [];
  for (const [option, key] of [['--report', 'report'], ['--junit', 'junit'], ['--html', 'html']]) {
    if (o[key]) files.push({ option, path: path.resolve(io.cwd, o[key]) });
  }
  const folders: RunRequest['folders'] = [];
  if (o.uvMaps) folders.push({ option: '--uv-maps', path: path.resolve(io.cwd, o.uvMaps), mayWrite: (name) => name.toLowerCase().endsWith('.svg') });
  if (o.views) folders.push({ option: '--views', path: path.resolve(io.cwd, o.views), mayWrite: (name) => name.toLowerCase().endsWith('.png') });
  return { files, folders };
}

/** One line on stderr for a file that could not be written: `tanframe: <what>: <reason>`. */
export function writeFailure(io: CliIo, what: string, err: unknown): void {
  const reason = String((err as Error)?.message ?? err).split('\n')[0];
  io.stderr(`tanframe: ${cleanText(what)}: ${cleanText(reason)}\n`);
}

/**
 * Triangles drawn over all the pictures of one HTML page; pictures past it are left out of
 * the page (with a note) so the page stays loadable. --uv-maps still gets every picture.
 * A choice of ours: about 50 MiB of inline SVG.
 */
export const HTML_PICTURE_TRIANGLES = 1_000_000;

/**
 * PNG bytes of normal maps (drawn behind UV pictures) one HTML page embeds; later pictures
 * on the page go without theirs (with a note). A choice of ours: 8 MiB, about 100 maxed-out
 * backgrounds (PICTURE_BACKGROUND_SIDE), under 11 MiB of base64 text.
 */
export const HTML_MAP_BYTES = 8 * 2 ** 20;

/**
 * The files of one picture folder option (--uv-maps, --views): unique names in the folder, each
 * file through the plan's late guard and written atomically, failures counted with one line
 * per run for a folder that cannot be made or written at all, one per file otherwise.
 */
class FolderWrites {
  private readonly names = new Set<string>();
  private readonly writes: Promise<void>[] = [];
  written = 0;
  failures = 0;

  constructor(private readonly io: CliIo, private readonly option: string, private readonly plan: WritePlan | null) {}

  /** `name`, or `<stem>~2<ext>`, `~3`, ... when an earlier file of the run took it. */
  unique(name: string): string {
    const dot = name.lastIndexOf('.');
    let chosen = name;
    for (let k = 2; this.names.has(chosen); k++) chosen = `${name.slice(0, dot)}~${k}${name.slice(dot)}`;
    this.names.add(chosen);
    return chosen;
  }

  /** Queues the write of `bytes` to `file`. */
  write(file: string, bytes: Uint8Array): void {
    this.writes.push((async () => {
      try {
        const target = this.plan ? this.plan.check(file, `${this.option}: ${this.plan.shown(file)}`) : file;
        await writeFilesAtomic([{ path: target, bytes }]);
        this.written++;
      } catch (err) {
        this.failures++;
        if (this.failures === 1 || !/cannot write/.test(String((err as Error)?.message))) writeFailure(this.io, this.option, err);
      }
    })());
  }

  /** Waits for every queued write. */
  async settle(): Promise<void> {
    await Promise.all(this.writes);
  }
}

/**
 * Receives the pictures of each file as the batch goes (in job order): writes each one as an
 * SVG file under --uv-maps and keeps the SVG text for --html within HTML_PICTURE_TRIANGLES.
 * Pictures are not kept beyond that, so memory stays bounded by the page budget.
 */
export class PictureOutputs {
  /** Pictures are wanted at all (--uv-maps or --html). */
  readonly wanted: boolean;
  /** What the HTML page shows, in job order. */
  readonly html: HtmlPicture[] = [];
  private readonly dir: string | null;
  private readonly forHtml: boolean;
  private htmlTriangles = 0;
  private htmlMapBytes = 0;
  private readonly files: FolderWrites;
  /** The SVG renderer, loaded by ready() (only a run that draws pictures loads it). */
  private svg: typeof import('../report/uvMapSvg.js') | null = null;

  /**
   * `htmlBudget`: the page's budget of drawn triangles, `mapBudget` of embedded normal-map
   * bytes (tests pass small ones). `plan`: the
   * run's write plan; each picture passes its late guard (no symbolic link, no file the run
   * reads or writes otherwise) before it is written.
   */
  constructor(
    o: Record<string, any>, private readonly io: CliIo, private readonly htmlBudget: number = HTML_PICTURE_TRIANGLES,
    plan: WritePlan | null = null, private readonly mapBudget: number = HTML_MAP_BYTES,
  ) {
    this.files = new FolderWrites(io, `--uv-maps ${o.uvMaps}`, plan);
    this.dir = o.uvMaps ? path.resolve(io.cwd, o.uvMaps) : null;
    this.forHtml = !!o.html;
    this.wanted = this.dir !== null || this.forHtml;
    this.views = new ViewOutputs(o, io, plan);
  }

  /** The view sheets of --views (and their copies for --html). */
  readonly views: ViewOutputs;

  /** Loads what drawing needs when pictures or view sheets are wanted; call before take(). Returns this. */
  async ready(): Promise<this> {
    if (this.wanted && !this.svg) this.svg = await import('../report/uvMapSvg.js');
    await this.views.ready();
    return this;
  }

  /**
   * Takes the pictures of one file (call in job order so names and the page are deterministic).
   * Precondition: ready() has resolved.
   */
  take(pictures: UvPicture[]): void {
    if (pictures.length === 0) return;
    if (!this.svg) throw new Error('PictureOutputs.take before ready()');
    const { pictureFileName, renderUvMapSvg } = this.svg;
    for (const p of pictures) {
      let svg: string | null = null;
      if (this.dir) {
        svg = renderUvMapSvg(p);
        this.files.write(path.join(this.dir, this.files.unique(pictureFileName(p.input, p.mesh, p.primitive))), new TextEncoder().encode(svg));
      }
      if (!this.forHtml) continue;
      const drawn = p.flags.length;
      if (this.htmlTriangles + drawn > this.htmlBudget) {
        this.html.push({ input: p.input, mesh: p.mesh, primitive: p.primitive, svg: null, omitted: `the page draws at most ${this.htmlBudget.toLocaleString('en-US')} triangles; see --uv-maps` });
        continue;
      }
      this.htmlTriangles += drawn;
      const id = `p${this.html.length + 1}-`;
      let shown = p;
      if (p.background) {
        if (this.htmlMapBytes + p.background.png.length > this.mapBudget) {
          shown = { ...p, background: null, backgroundNote: `normal map left out of the page (it embeds at most ${this.mapBudget.toLocaleString('en-US')} bytes of them; see --uv-maps)` };
        } else {
          this.htmlMapBytes += p.background.png.length;
        }
      }
      this.html.push({ input: p.input, mesh: p.mesh, primitive: p.primitive, svg: renderUvMapSvg(shown, { idPrefix: id }) });
    }
  }

  /**
   * Waits for the SVG files (a picture that cannot be written got its line on stderr); returns
   * how many were written and how many failed.
   */
  async finish(): Promise<{ written: number; failed: number }> {
    await this.files.settle();
    const v = await this.views.finish();
    return { written: this.files.written + v.written, failed: this.files.failures + v.failed };
  }
}

/**
 * PNG bytes of view sheets one HTML page embeds in all; later sheets are left out of the page
 * (with a note; --views still has them). A choice of ours: 16 MiB, 40 sheets at the page's
 * per-sheet budget (PAGE_SHEET_BYTES), about 21 MiB of base64 text.
 */
export const HTML_VIEW_BYTES = 16 * 2 ** 20;

/**
 * Receives the view sheets of each file as the batch goes (in job order): writes each full
 * sheet as a PNG under --views (through the plan's late guard, atomically) and keeps the
 * page's copy for --html within HTML_VIEW_BYTES. Notes of a sheet go to stderr, one line each.
 */
export class ViewOutputs {
  /** --views was given. */
  readonly wanted: boolean;
  /** What the HTML page shows, in job order. */
  readonly html: HtmlView[] = [];
  private readonly dir: string | null;
  private readonly forHtml: boolean;
  private readonly option: string;
  private readonly files: FolderWrites;
  private pageBytes = 0;

  /** `pageBudget`: the page's budget of sheet bytes (tests pass a small one); `plan`: the run's write plan. */
  constructor(o: Record<string, any>, private readonly io: CliIo, plan: WritePlan | null = null, private readonly pageBudget: number = HTML_VIEW_BYTES) {
    this.dir = o.views ? path.resolve(io.cwd, o.views) : null;
    this.option = `--views ${o.views}`;
    this.files = new FolderWrites(io, this.option, plan);
    this.wanted = this.dir !== null;
    this.forHtml = this.wanted && !!o.html;
  }

  /** What the jobs are to render: the full sheet, and the page's copy when --html is given too. */
  wants(): { sheet: boolean; page: boolean } | undefined {
    return this.wanted ? { sheet: true, page: this.forHtml } : undefined;
  }

  /** The file-name helper, loaded by ready() (only a run with --views loads it). */
  private names_: typeof import('../report/uvMapSvg.js') | null = null;

  /** Loads what naming the sheets needs when --views is given; call before take(). Returns this. */
  async ready(): Promise<this> {
    if (this.wanted && !this.names_) this.names_ = await import('../report/uvMapSvg.js');
    return this;
  }

  /** Takes one file's sheets (call in job order so names and the page are deterministic). Precondition: ready() has resolved. */
  take(v: ViewSheet | null): void {
    if (!v || !this.wanted) return;
    if (!this.names_) throw new Error('ViewOutputs.take before ready()');
    const { viewFileName } = this.names_;
    for (const note of v.notes) this.io.stderr(`tanframe: ${cleanText(v.input)}: --views: ${cleanText(note)}\n`);
    if (this.dir && v.sheet) {
      this.files.write(path.join(this.dir, this.files.unique(viewFileName(v.input))), v.sheet);
    }
    if (!this.forHtml) return;
    if (!v.page) {
      this.html.push({ input: v.input, png: null, omitted: v.pageOmitted ?? 'not drawn' });
    } else if (this.pageBytes + v.page.length > this.pageBudget) {
      this.html.push({ input: v.input, png: null, omitted: `the page embeds at most ${this.pageBudget.toLocaleString('en-US')} bytes of sheets; see --views` });
    } else {
      this.pageBytes += v.page.length;
      this.html.push({ input: v.input, png: v.page });
    }
  }

  /** Waits for the PNG files; returns how many were written and how many failed. */
  async finish(): Promise<{ written: number; failed: number }> {
    await this.files.settle();
    return { written: this.files.written, failed: this.files.failures };
  }
}

/**
 * Writes one report file atomically (to `planned`'s path for `option`, a named link's target,
 * when the plan settled one). A failure is one line on stderr; returns 1 then, else 0.
 */
export async function writeNamedFile(option: string, file: string, text: string, io: CliIo, planned?: Map<string, string>): Promise<number> {
  try {
    await writeFilesAtomic([{ path: planned?.get(option) ?? path.resolve(io.cwd, file), bytes: new TextEncoder().encode(text) }]);
    return 0;
  } catch (err) {
    writeFailure(io, `${option} ${file}`, err);
    return 1;
  }
}

/**
 * Writes --junit and --html (atomically) when asked for; one that cannot be written does not
 * stop the other. Returns how many could not be written.
 */
export async function writeReportFiles(report: Report, o: Record<string, any>, io: CliIo, pictures: PictureOutputs, planned?: Map<string, string>): Promise<number> {
  let failed = 0;
  // The renderers load only when their file is asked for.
  if (o.junit) failed += await writeNamedFile('--junit', o.junit, (await import('../report/junit.js')).renderJunit(report), io, planned);
  if (o.html) failed += await writeNamedFile('--html', o.html, (await import('../report/html.js')).renderHtml(report, pictures.html, pictures.views.html), io, planned);
  return failed;
}
