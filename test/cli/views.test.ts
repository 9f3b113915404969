// `audit` / `bake --views <dir>` (DESIGN.md): one PNG sheet per file with findings, as `render`
// makes it, written through the run's write plan; `--html` embeds a smaller copy of each,
// within the page's byte budget.
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { pathToFileURL } from 'node:url';
import { decode } from 'fast-png';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { cornerUv, gridAsset, setCornerUv, writeGridGlb } from '../helpers/gridAsset.js';
import { ViewOutputs } from '../../src/cli/outputs.js';
import { readAsset } from '../../src/lib/processFile.js';
import { defaultProcessOptions } from '../../src/lib/options.js';
import { PAGE_SHEET_BYTES, PAGE_VIEW_SIZE, renderViewSheets } from '../../src/lib/viewSheets.js';
import { viewFileName } from '../../src/report/uvMapSvg.js';

const CHROMIUM = '/usr/bin/chromium';
const hasChromium = fs.existsSync(CHROMIUM);
if (!hasChromium) console.warn(`SKIPPED (in part): ${CHROMIUM} is absent; the page with view sheets was not opened in a browser`);

let tmp = '';
beforeAll(async () => {
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-views-'));
  const dir = path.join(tmp, 'assets');
  await writeGridGlb(dir, 'clean', gridAsset(4));
  // Two triangles of a 6 x 6 grid with a corner's UV collapsed onto another: degenerate UVs.
  const bad = gridAsset(6);
  for (const t of [4, 30]) setCornerUv(bad, t, 2, cornerUv(bad, t, 1));
  await writeGridGlb(dir, 'collapsed', bad);
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

/** The data: URI PNGs of an HTML page, decoded from base64, in page order. */
function embeddedPngs(html: string): Uint8Array[] {
  return [...html.matchAll(/<img [^>]*src="data:image\/png;base64,([A-Za-z0-9+/=]+)"/g)].map((m) => new Uint8Array(Buffer.from(m[1], 'base64')));
}

describe('--views', () => {
  it('writesOneSheetPerFileWithFindingsAsRenderMakesItTheSameForAnyJobs', async () => {
    const one = await runCli(['audit', 'assets', '--views', 'views-1', '--jobs', '1', '--quiet'], tmp);
    const two = await runCli(['audit', 'assets', '--views', 'views-2', '--jobs', '2', '--quiet'], tmp);
    expect([one.code, two.code]).toEqual([0, 0]);
    // The clean grid has no findings: no sheet.
    expect(fs.readdirSync(path.join(tmp, 'views-1'))).toEqual(['assets_collapsed.glb.png']);
    const sheet = fs.readFileSync(path.join(tmp, 'views-1', 'assets_collapsed.glb.png'));
    expect(fs.readFileSync(path.join(tmp, 'views-2', 'assets_collapsed.glb.png')).equals(sheet)).toBe(true);
    // As `render` makes it with its defaults: the same bytes.
    const rendered = await runCli(['render', 'assets/collapsed.glb', '-o', 'rendered.png', '--quiet'], tmp);
    expect(rendered.code).toBe(0);
    expect(fs.readFileSync(path.join(tmp, 'rendered.png')).equals(sheet)).toBe(true);
    const png = decode(sheet);
    expect(png.width).toBeGreaterThan(4 * 512); // four views of 512 px and the legend column
    expect(png.height).toBeGreaterThan(3 * 512); // three modes
  });

  it('embedsEachSheetInTheHtmlPageWithinItsBudget', async () => {
    const r = await runCli(['audit', 'assets', '--views', 'page-views', '--html', 'page.html', '--uv-maps', 'page-maps', '--quiet'], tmp);
    expect(r.code).toBe(0);
    const html = fs.readFileSync(path.join(tmp, 'page.html'), 'utf8');
    const sheets = embeddedPngs(html);
    expect(sheets.length).toBe(1);
    expect(html).toMatch(/<figure class="view" data-view="assets\/collapsed\.glb"><img alt="Views of assets\/collapsed\.glb/);
    // The page's copy is render's sheet at PAGE_VIEW_SIZE px a view (the same bytes), and within the budget.
    const small = await runCli(['render', 'assets/collapsed.glb', '-o', 'small.png', '--size', String(PAGE_VIEW_SIZE), '--quiet'], tmp);
    expect(small.code).toBe(0);
    expect(Buffer.from(sheets[0]).equals(fs.readFileSync(path.join(tmp, 'small.png')))).toBe(true);
    expect(sheets[0].length).toBeLessThanOrEqual(PAGE_SHEET_BYTES);
    // The sheet sits beside the file's UV picture, in the same section.
    const section = html.slice(html.indexOf('<section class="file'), html.indexOf('</section>'));
    expect(section).toContain('<figure class="view"');
    expect(section).toContain('<figure data-picture="m0p0">');
    // Still self-contained: every image is a data: URI, nothing else is loaded.
    expect([...html.matchAll(/<img [^>]*src="([^"]{0,30})/g)].every((m) => m[1].startsWith('data:image/png;base64,'))).toBe(true);
    expect(html).not.toMatch(/<script|<link|<iframe|@import/i);
    // Without --views the page has no sheet.
    await runCli(['audit', 'assets', '--html', 'no-views.html', '--quiet'], tmp);
    expect(embeddedPngs(fs.readFileSync(path.join(tmp, 'no-views.html'), 'utf8'))).toEqual([]);
  });

  it.skipIf(!hasChromium)('showsTheEmbeddedSheetInABrowserLoadingNothingElse', async () => {
    // Debian's chromium, headless through playwright-core (as test/report/html.test.ts).
    const { chromium } = await import('playwright-core');
    const browser = await chromium.launch({ executablePath: CHROMIUM, args: ['--no-sandbox'] });
    try {
      const tab = await browser.newPage({ viewport: { width: 1200, height: 900 } });
      const requests: string[] = [];
      tab.on('request', (req) => requests.push(req.url()));
      const page = pathToFileURL(path.join(tmp, 'page.html')).href;
      await tab.goto(page);
      expect(requests.filter((u) => !u.startsWith('data:'))).toEqual([page]);
      const img = await tab.locator('figure.view img').evaluate((e) => {
        const i = e as HTMLImageElement;
        return { complete: i.complete, w: i.naturalWidth, h: i.naturalHeight, shown: i.getBoundingClientRect().width };
      });
      // The page's copy decodes at its own size (render at PAGE_VIEW_SIZE) and is laid out.
      const small = decode(fs.readFileSync(path.join(tmp, 'small.png')));
      expect(img).toMatchObject({ complete: true, w: small.width, h: small.height });
      expect(img.shown).toBeGreaterThan(400);
    } finally {
      await browser.close();
    }
  });

  it('leavesASheetOverTheBudgetOutOfThePageWithANote', async () => {
    const asset = await readAsset(path.join(tmp, 'assets', 'collapsed.glb'));
    const v = await renderViewSheets(asset, defaultProcessOptions(), { sheet: false, page: true }, 1000);
    expect(v.page).toBeNull();
    expect(v.pageOmitted).toMatch(/^[\d,]+ bytes, over the budget of 1,000 for one sheet; see --views$/);
    const ok = await renderViewSheets(asset, defaultProcessOptions(), { sheet: false, page: true });
    expect(ok.page).not.toBeNull();
    expect(ok.sheet).toBeNull();
    // The page's total budget: the second sheet of 2 x n bytes does not fit in 1.5 x n.
    const n = ok.page!.length;
    const stderr: string[] = [];
    const io = { stdout: () => {}, stderr: (s: string) => stderr.push(s), cwd: tmp, isTTY: false, env: {} };
    const out = await new ViewOutputs({ views: 'budget-views', html: 'x.html' }, io, null, Math.floor(1.5 * n)).ready();
    out.take({ ...ok, input: 'a.glb' });
    out.take({ ...ok, input: 'b.glb' });
    out.take({ ...v, input: 'c.glb', notes: ['note of c'] });
    await out.finish();
    expect(out.html.map((h) => [h.input, h.png !== null])).toEqual([['a.glb', true], ['b.glb', false], ['c.glb', false]]);
    expect(out.html[1].omitted).toBe(`the page embeds at most ${Math.floor(1.5 * n).toLocaleString('en-US')} bytes of sheets; see --views`);
    expect(out.html[2].omitted).toBe(v.pageOmitted);
    expect(stderr).toEqual(['tanframe: c.glb: --views: note of c\n']);
  });

  it('bakeWritesTheSheetsToo', async () => {
    const r = await runCli(['bake', 'assets', '-o', 'baked', '--views', 'bake-views', '--quiet'], tmp);
    expect(r.code).toBe(0);
    expect(fs.readdirSync(path.join(tmp, 'bake-views'))).toEqual(['assets_collapsed.glb.png']);
    expect(fs.readFileSync(path.join(tmp, 'bake-views', 'assets_collapsed.glb.png')).equals(fs.readFileSync(path.join(tmp, 'rendered.png')))).toBe(true);
  });

  it('refusesASymbolicLinkPlantedInTheViewsFolder', async () => {
    const dir = path.join(tmp, 'planted');
    fs.mkdirSync(path.join(dir, 'views'), { recursive: true });
    fs.copyFileSync(path.join(tmp, 'assets', 'collapsed.glb'), path.join(dir, 'collapsed.glb'));
    fs.writeFileSync(path.join(dir, 'victim.png'), 'keep me');
    fs.symlinkSync(path.join(dir, 'victim.png'), path.join(dir, 'views', viewFileName('collapsed.glb')));
    const r = await runCli(['audit', 'collapsed.glb', '--views', 'views', '--report', 'r.json'], dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--views views: views\/collapsed\.glb\.png is a symbolic link to victim\.png/);
    expect(fs.readFileSync(path.join(dir, 'victim.png'), 'utf8')).toBe('keep me');
    expect(fs.existsSync(path.join(dir, 'r.json'))).toBe(false);
  });
});
