/**
 * The report files besides the JSON one: UV pictures (--uv-maps), the JUnit file (--junit)
 * and the HTML page (--html), shared by `bake` and `audit`.
 */
import * as fs from 'node:fs/promises';
import * as path from 'node:path';
import { TanframeError } from '../mesh/errors.js';
import { writeFilesAtomic } from '../io/files.js';
import { renderHtml, type HtmlPicture } from '../report/html.js';
import { renderJunit } from '../report/junit.js';
import type { Report } from '../report/types.js';
import { pictureFileName, renderUvMapSvg } from '../report/uvMapSvg.js';
import type { UvPicture } from '../report/uvPicture.js';
import type { CliIo } from './shared.js';

/**
 * Triangles drawn over all the pictures of one HTML page; pictures past it are left out of
 * the page (with a note) so the page stays loadable. --uv-maps still gets every picture.
 * A choice of ours: about 50 MiB of inline SVG.
 */
export const HTML_PICTURE_TRIANGLES = 1_000_000;

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
  private readonly names = new Set<string>();
  private readonly writes: Promise<void>[] = [];
  private dirReady: Promise<void> | null = null;
  private written = 0;

  /** `htmlBudget`: the page's budget of drawn triangles (tests pass a small one). */
  constructor(o: Record<string, any>, io: CliIo, private readonly htmlBudget: number = HTML_PICTURE_TRIANGLES) {
    this.dir = o.uvMaps ? path.resolve(io.cwd, o.uvMaps) : null;
    this.forHtml = !!o.html;
    this.wanted = this.dir !== null || this.forHtml;
  }

  /** Takes the pictures of one file (call in job order so names and the page are deterministic). */
  take(pictures: UvPicture[]): void {
    for (const p of pictures) {
      let svg: string | null = null;
      if (this.dir) {
        svg = renderUvMapSvg(p);
        let name = pictureFileName(p.input, p.mesh, p.primitive);
        for (let k = 2; this.names.has(name); k++) name = pictureFileName(p.input, p.mesh, p.primitive).replace(/\.svg$/, `~${k}.svg`);
        this.names.add(name);
        const dir = this.dir;
        this.dirReady ??= fs.mkdir(dir, { recursive: true }).then(() => undefined);
        const bytes = new TextEncoder().encode(svg);
        this.writes.push(this.dirReady.then(() => fs.writeFile(path.join(dir, name), bytes)));
        this.written++;
      }
      if (!this.forHtml) continue;
      const drawn = p.flags.length;
      if (this.htmlTriangles + drawn > this.htmlBudget) {
        this.html.push({ input: p.input, mesh: p.mesh, primitive: p.primitive, svg: null, omitted: `the page draws at most ${this.htmlBudget.toLocaleString('en-US')} triangles; see --uv-maps` });
        continue;
      }
      this.htmlTriangles += drawn;
      const id = `p${this.html.length + 1}-`;
      this.html.push({ input: p.input, mesh: p.mesh, primitive: p.primitive, svg: renderUvMapSvg(p, { idPrefix: id }) });
    }
  }

  /** Waits for the SVG files; returns how many were written. */
  async finish(o: Record<string, any>): Promise<number> {
    try {
      await Promise.all(this.writes);
    } catch (err) {
      throw new TanframeError('write-failed', `cannot write the UV pictures under ${o.uvMaps}: ${(err as Error).message}`);
    }
    return this.written;
  }
}

/** Writes --junit and --html (atomically) when asked for. */
export async function writeReportFiles(report: Report, o: Record<string, any>, io: CliIo, pictures: PictureOutputs): Promise<void> {
  const write = async (option: string, file: string, text: string) => {
    try {
      await writeFilesAtomic([{ path: path.resolve(io.cwd, file), bytes: new TextEncoder().encode(text) }]);
    } catch (err) {
      throw new TanframeError('write-failed', `cannot write ${option} ${file}: ${(err as Error).message}`);
    }
  };
  if (o.junit) await write('--junit', o.junit, renderJunit(report));
  if (o.html) await write('--html', o.html, renderHtml(report, pictures.html));
}
