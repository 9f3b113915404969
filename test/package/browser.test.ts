// The `tanframe/frames` entry in a browser: bundled by esbuild for the browser platform (a
// Node.js import anywhere in its graph fails the build), loaded in headless Chromium (Debian's
// /usr/bin/chromium through playwright-core; .ci/run installs it), where computeFrames runs
// on test meshes; the results must equal Node's bit for bit (the solve is deterministic
// float64 arithmetic stored as float32, which every conforming JavaScript engine performs
// identically: ECMAScript's Number and Math.fround semantics). Also the main entry as a web
// application's Vite build takes it (Node.js built-ins replaced by empty modules): it must
// load in the page without throwing, since nothing runs at import time.
import { existsSync } from 'node:fs';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { computeFrames } from '../../src/frames/computeFrames.js';
import type { FrameOptions, FrameResult } from '../../src/mesh/types.js';
import { mirroredSheet, noisyScan, torus } from '../helpers/surfaces.js';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const CHROMIUM = '/usr/bin/chromium';
const hasChromium = existsSync(CHROMIUM);
if (!hasChromium) console.warn(`SKIPPED: ${CHROMIUM} is absent (apt-get install chromium; .ci/run does it); the browser run of tanframe/frames did not run`);

/** Bundles `tanframe/frames` (resolved through the package's own exports, from dist/) for the browser. */
async function bundleFrames(): Promise<{ code: string; bytes: number }> {
  const esbuild = await import('esbuild');
  const result = await esbuild.build({
    stdin: { contents: "export * from 'tanframe/frames';", resolveDir: repoRoot, sourcefile: 'entry.js' },
    bundle: true,
    platform: 'browser',
    format: 'iife',
    globalName: 'tanframeFrames',
    minify: true,
    write: false,
    logLevel: 'silent',
  });
  const code = result.outputFiles[0].text;
  return { code, bytes: Buffer.byteLength(code) };
}

/** Vite's production build of a page importing `tanframe` (the main entry): its chunks by file name. */
async function viteBuildOfMainEntry(): Promise<Map<string, string>> {
  const { build } = await import('vite');
  const out: any = await build({
    configFile: false,
    logLevel: 'silent',
    root: repoRoot,
    build: { lib: { entry: path.join(repoRoot, 'dist/index.js'), formats: ['es'], fileName: 'bundle' }, write: false, minify: false },
  });
  const chunks = new Map<string, string>();
  for (const o of (Array.isArray(out) ? out : [out]).flatMap((r: any) => r.output)) if (o.type === 'chunk') chunks.set(o.fileName, o.code);
  return chunks;
}

interface Case {
  name: string;
  positions: Float32Array;
  normals: Float32Array;
  uvs: Float32Array;
  indices: Uint32Array;
  options: FrameOptions;
}

function cases(): Case[] {
  const t = torus({ n: 12, uvOrigin: 'top-left' });
  const m = mirroredSheet({ n: 6, seam: 'shared' });
  const s = noisyScan({ n: 10, seed: 7 });
  return [
    { name: 'torus mikktspace', ...t, options: { method: 'mikktspace', uvOrigin: 'top-left' } },
    { name: 'mirrored sheet mikktspace (splits)', ...m, options: { uvOrigin: 'bottom-left' } },
    { name: 'noisy scan lengyel angle', ...s, options: { method: 'lengyel', weight: 'angle', uvOrigin: 'bottom-left' } },
  ].map((c) => ({ name: c.name, positions: c.positions, normals: c.normals, uvs: c.uvs, indices: c.indices, options: c.options as FrameOptions }));
}

/** The result as plain numbers: float32 bit patterns of the tangents, indices, sources, stats. */
function bits(r: FrameResult): { tangentBits: number[]; indices: number[]; sourceVertex: number[]; stats: FrameResult['stats'] } {
  return {
    tangentBits: Array.from(new Uint32Array(r.tangents.buffer, r.tangents.byteOffset, r.tangents.length)),
    indices: Array.from(r.indices),
    sourceVertex: Array.from(r.sourceVertex),
    stats: r.stats,
  };
}

describe('tanframe/frames in a browser', () => {
  it('bundlesForTheBrowserWithoutNodeImportsAndStaysSmall', async () => {
    const { bytes } = await bundleFrames();
    console.log(`tanframe/frames browser bundle: ${bytes} bytes minified (target at most 15,000)`);
    expect(bytes).toBeGreaterThan(1000);
    expect(bytes).toBeLessThanOrEqual(15_000);
  });

  it.skipIf(!hasChromium)('computeFramesInChromiumEqualsNodeBitForBit', async () => {
    const { code } = await bundleFrames();
    const { chromium } = await import('playwright-core');
    const browser = await chromium.launch({ executablePath: CHROMIUM, args: ['--no-sandbox'] });
    try {
      const page = await browser.newPage();
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(String(e)));
      await page.setContent('<!doctype html><html><body></body></html>');
      await page.addScriptTag({ content: code });
      expect(await page.evaluate('typeof window.tanframeFrames.computeFrames')).toBe('function');
      for (const c of cases()) {
        const node = bits(computeFrames({ positions: c.positions, normals: c.normals, uvs: c.uvs, indices: c.indices }, c.options));
        const browserResult = await page.evaluate(
          ({ p, n, uv, idx, options }) => {
            const api = (window as any).tanframeFrames;
            const r = api.computeFrames(
              { positions: new Float32Array(p), normals: new Float32Array(n), uvs: new Float32Array(uv), indices: new Uint32Array(idx) },
              options,
            );
            return {
              tangentBits: Array.from(new Uint32Array(r.tangents.buffer, r.tangents.byteOffset, r.tangents.length)),
              indices: Array.from(r.indices as Uint32Array),
              sourceVertex: Array.from(r.sourceVertex as Uint32Array),
              stats: r.stats,
            };
          },
          { p: Array.from(c.positions), n: Array.from(c.normals), uv: Array.from(c.uvs), idx: Array.from(c.indices), options: c.options },
        );
        expect(node.tangentBits.length, c.name).toBeGreaterThan(0);
        expect(browserResult.tangentBits, c.name).toEqual(node.tangentBits);
        expect(browserResult.indices, c.name).toEqual(node.indices);
        expect(browserResult.sourceVertex, c.name).toEqual(node.sourceVertex);
        expect(browserResult.stats, c.name).toEqual(node.stats);
      }
      // The mirrored sheet really split vertices, so the split path ran in the browser too.
      expect(computeFrames(cases()[1], cases()[1].options).stats.splitVertices).toBeGreaterThan(0);
      expect(errors).toEqual([]);
    } finally {
      await browser.close();
    }
  });

  it.skipIf(!hasChromium)('viteBuildOfTheMainEntryLoadsInChromium', async () => {
    const chunks = await viteBuildOfMainEntry();
    expect(chunks.has('bundle.js')).toBe(true);
    const { chromium } = await import('playwright-core');
    const browser = await chromium.launch({ executablePath: CHROMIUM, args: ['--no-sandbox'] });
    try {
      const page = await browser.newPage();
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(String(e)));
      // The built files served from memory at a made-up origin.
      await page.route('http://tanframe.invalid/**', (route) => {
        const name = new URL(route.request().url()).pathname.slice(1);
        if (name === 'index.html') {
          return route.fulfill({
            contentType: 'text/html',
            body: "<!doctype html><script type=module>import * as t from './bundle.js'; window.tanframe = t; window.loaded = true;</script>",
          });
        }
        const code = chunks.get(name);
        return code === undefined ? route.fulfill({ status: 404, body: '' }) : route.fulfill({ contentType: 'text/javascript', body: code });
      });
      await page.goto('http://tanframe.invalid/index.html');
      await page.waitForFunction('window.loaded === true || false', null, { timeout: 20_000 }).catch(() => undefined);
      expect(errors).toEqual([]);
      expect(await page.evaluate('window.loaded === true')).toBe(true);
      const c = cases()[0];
      const node = bits(computeFrames({ positions: c.positions, normals: c.normals, uvs: c.uvs, indices: c.indices }, c.options));
      const viaMain = await page.evaluate(
        ({ p, n, uv, idx, options }) => {
          const r = (window as any).tanframe.computeFrames(
            { positions: new Float32Array(p), normals: new Float32Array(n), uvs: new Float32Array(uv), indices: new Uint32Array(idx) }, options);
          return Array.from(new Uint32Array(r.tangents.buffer, r.tangents.byteOffset, r.tangents.length));
        },
        { p: Array.from(c.positions), n: Array.from(c.normals), uv: Array.from(c.uvs), idx: Array.from(c.indices), options: c.options },
      );
      expect(viaMain).toEqual(node.tangentBits);
    } finally {
      await browser.close();
    }
  });
});
