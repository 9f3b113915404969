// The --html page: self-contained, and checked in a real browser (Debian's chromium driven
// headless through playwright-core; .ci/run installs chromium). A screenshot is saved under
// test-output/.
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { cornerUv, gridAsset, setCornerUv, writeGridGlb } from '../helpers/gridAsset.js';

const repo = path.resolve(__dirname, '../..');
const demo = path.join(repo, 'examples/harbor-props');
const CHROMIUM = '/usr/bin/chromium';
const hasChromium = fs.existsSync(CHROMIUM);
if (!hasChromium) console.warn(`SKIPPED: ${CHROMIUM} is absent (apt-get install chromium; .ci/run does it); the browser check of the HTML report did not run`);

let tmp = '';
let page = '';
let report: any;
let pictureFiles: string[] = [];

beforeAll(async () => {
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-html-'));
  const dir = path.join(tmp, 'assets');
  await writeGridGlb(dir, 'clean', gridAsset(4));
  const bad = gridAsset(6);
  for (const t of [4, 30]) setCornerUv(bad, t, 2, cornerUv(bad, t, 1));
  await writeGridGlb(dir, 'collapsed', bad);
  fs.writeFileSync(path.join(dir, 'truncated.glb'), fs.readFileSync(path.join(dir, 'clean.glb')).subarray(0, 50));
  page = path.join(tmp, 'out', 'report.html');
  const r = await runCli(
    ['audit', 'assets', demo, '--fail-on', 'degenerate-uv', '--html', 'out/report.html', '--report', 'out/report.json', '--uv-maps', 'out/maps', '--quiet'],
    tmp,
  );
  expect(r.code).toBe(3); // the truncated file
  report = JSON.parse(fs.readFileSync(path.join(tmp, 'out', 'report.json'), 'utf8'));
  pictureFiles = fs.readdirSync(path.join(tmp, 'out', 'maps'));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

describe('html report (text)', () => {
  it('isOneSelfContainedFile', () => {
    const html = fs.readFileSync(page, 'utf8');
    expect(html.startsWith('<!doctype html>')).toBe(true);
    // No script, no external stylesheet, image, font or link: the only URL is the SVG namespace.
    expect(html).not.toMatch(/<script|<link|<img|<iframe|@import|src=/i);
    // Embedded images are data: URIs of PNG bytes (the normal maps behind the UV pictures),
    // taken out before looking for URLs (base64 text may hold '//').
    const embedded = html.match(/href="data:image\/png;base64,[A-Za-z0-9+/=]+"/g) ?? [];
    expect(embedded.length).toBeGreaterThan(0);
    const rest = html.replace(/href="data:image\/png;base64,[A-Za-z0-9+/=]+"/g, 'href="#embedded"');
    const urls = rest.match(/(?:https?:|ftp:|\/\/)[^\s"'<>)]*/g) ?? [];
    expect(new Set(urls)).toEqual(new Set(['http://www.w3.org/2000/svg']));
    expect(rest.match(/href="([^"]*)"/g)?.every((h) => h.startsWith('href="#'))).toBe(true);
    // Every picture --uv-maps wrote is inline here too, with its own ids.
    expect((html.match(/<figure data-picture=/g) ?? []).length).toBe(pictureFiles.length);
    const ids = [...html.matchAll(/<pattern id="([^"]+)"/g)].map((m) => m[1]);
    expect(new Set(ids).size).toBe(ids.length);
    expect(html).toContain('Could not be processed: ');
  });

  it('saysWhereTheListedTrianglesAre', () => {
    const html = fs.readFileSync(page, 'utf8');
    // The collapsed 6 x 6 grid (test/helpers/gridAsset.ts sketch): triangle 4 is the even
    // triangle of quad (2, 0), centroid (2 + 2/3, 1/3, 0); triangle 30 of quad (3, 2), (3 + 2/3, 2 + 1/3, 0).
    expect(html).toContain('degenerate UV: triangles 4 (at 2.667, 0.3333, 0), 30 (at 3.667, 2.333, 0)</div>');
    // The demo's dock plank is OBJ: its first face statement is on line 76 of dock_plank.obj.
    const obj = fs.readFileSync(path.join(demo, 'dock', 'dock_plank.obj'), 'utf8').split('\n');
    const firstFace = obj.findIndex((l) => l.startsWith('f ')) + 1;
    expect(html).toContain(`UV overlap: triangles 0 (at -0.8333, 0.03, 0.05; line ${firstFace}), 1 (at -0.9167, 0.03, -0.05; line ${firstFace})`);
  });
});

describe.skipIf(!hasChromium)('html report in a browser', () => {
  it('showsTheSummaryNumbersAndRendersThePictures', async () => {
    const { chromium } = await import('playwright-core');
    const browser = await chromium.launch({ executablePath: CHROMIUM, args: ['--no-sandbox'] });
    try {
      const tab = await browser.newPage({ viewport: { width: 1200, height: 900 } });
      const requests: string[] = [];
      tab.on('request', (req) => requests.push(req.url()));
      await tab.goto(pathToFileURL(page).href);
      // The page loads nothing but itself.
      expect(requests).toEqual([pathToFileURL(page).href]);
      const num = async (key: string) => (await tab.locator(`[data-key="${key}"] .num`).textContent())?.replace(/,/g, '');
      const s = report.summary;
      const gated = report.files.filter((f: any) => f.gates.length > 0).length;
      expect(s.files).toBe(9);
      expect(await num('files')).toBe(String(s.files));
      expect(await num('ok')).toBe(String(s.ok));
      expect(await num('failed')).toBe('1');
      expect(await num('gated')).toBe(String(gated));
      expect(await num('triangles')).toBe(String(s.triangles));
      expect(await num('degenerateUv')).toBe(String(s.degenerateUv));
      expect(s.degenerateUv).toBe(2 + 12); // the collapsed grid and the demo's lobster trap
      expect(await tab.locator('[data-key="verdict"]').textContent()).toContain('Gates tripped: degenerate-uv');
      expect(await tab.locator('#overview tbody tr').count()).toBe(9);
      // Every inline picture is laid out with a real size, and the degenerate marks are drawn.
      const boxes = await tab.locator('figure svg').evaluateAll((els) => els.map((e) => {
        const r = e.getBoundingClientRect();
        return { w: r.width, h: r.height };
      }));
      expect(boxes.length).toBe(pictureFiles.length);
      expect(boxes.length).toBeGreaterThanOrEqual(3);
      for (const b of boxes) {
        expect(b.w).toBeGreaterThan(100);
        expect(b.h).toBeGreaterThan(100);
      }
      const collapsed = tab.locator('section[data-input="assets/collapsed.glb"]');
      expect(await collapsed.locator('td.gate').first().textContent()).toBe('2');
      const marks = await collapsed.locator('figure svg path.degenerate').evaluate((e) => {
        const r = (e as SVGGraphicsElement).getBBox();
        return { w: r.width, h: r.height };
      });
      expect(marks.w).toBeGreaterThan(5);
      expect(marks.h).toBeGreaterThan(5);
      const shot = path.join(repo, 'test-output', 'audit-report.png');
      fs.mkdirSync(path.dirname(shot), { recursive: true });
      await tab.screenshot({ path: shot, fullPage: true });
      expect(fs.statSync(shot).size).toBeGreaterThan(10_000);
      console.log(`HTML report screenshot: ${path.relative(repo, shot)}`);
    } finally {
      await browser.close();
    }
  });
});
