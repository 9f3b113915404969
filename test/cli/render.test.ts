// End-to-end runs of `tanframe render` in-process: picture sizes, the write plan's guards
// (DESIGN.md Guarantees), bad input, JPEG and unsupported textures.
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import jpeg from 'jpeg-js';
import { decodePng } from '../../src/imaging/png.js';
import { runCli } from '../helpers/cli.js';
import { buildGltf, glbBytes, unitQuad } from '../helpers/gltfBuilder.js';
import { materialGlb, pixel, renderBytes, srgb } from '../helpers/renderAssets.js';
import { readAssetBytes } from '../../src/lib/processFile.js';
import { buildRenderScene, defaultRenderOptions } from '../../src/lib/renderAsset.js';

const repo = path.resolve(__dirname, '../..');
let tmp = '';
beforeAll(() => { tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-render-cli-')); });
afterAll(() => { fs.rmSync(tmp, { recursive: true, force: true }); });

const png = (file: string) => decodePng(new Uint8Array(fs.readFileSync(file)));

describe('tanframe render', () => {
  it('one view and one mode give exactly --size x --size pixels; the default sheet labels 4 views x 3 modes', async () => {
    const input = path.join(tmp, 'quad.glb');
    fs.writeFileSync(input, materialGlb([unitQuad()], { baseColor: [0.5, 0.2, 0.1] }));
    const one = await runCli(['render', input, '-o', 'one.png', '--views', 'iso', '--modes', 'findings', '--size', '100'], tmp);
    expect(one.code).toBe(0);
    expect(one.stdout).toMatch(/^render: .*quad\.glb -> one\.png: iso x findings, 100 x 100 px, [\d.]+ s\n$/);
    const img = png(path.join(tmp, 'one.png'));
    expect([img.width, img.height, img.channels]).toEqual([100, 100, 4]);
    const sheet = await runCli(['render', input, '-o', 'sheet.png', '--size', '64'], tmp);
    expect(sheet.code).toBe(0);
    const s = png(path.join(tmp, 'sheet.png'));
    // A band of labels on the left and on top, then 4 columns and 3 rows of 64 px.
    expect(s.width).toBeGreaterThan(4 * 64);
    expect(s.height).toBeGreaterThan(3 * 64);
    expect(fs.readdirSync(tmp).filter((n) => n.includes('.tmp') || n.startsWith('.'))).toEqual([]);
  });

  it('refuses an output over the input or a file it references with exit 2, and writes nothing', async () => {
    // Source: DESIGN.md Guarantees (a plan that would write over an input of the run, including the
    // images the inputs reference, is refused with exit 2 and nothing written).
    const dir = path.join(tmp, 'crate');
    fs.cpSync(path.join(repo, 'examples/harbor-props/crate'), dir, { recursive: true });
    const before = fs.readFileSync(path.join(dir, 'crate_normal.png'));
    const r = await runCli(['render', 'crate/crate.gltf', '-o', 'crate/crate_normal.png'], tmp);
    expect(r.code).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/crate_normal\.png.*reads/);
    expect(Buffer.compare(fs.readFileSync(path.join(dir, 'crate_normal.png')), before)).toBe(0);
    const again = await runCli(['render', 'crate/crate.gltf', '-o', 'crate/crate.gltf'], tmp);
    expect(again.code).toBe(2);
    expect((await runCli(['render', 'crate/crate.gltf', '-o', 'crate/crate.jpg'], tmp)).code).toBe(2);
    expect((await runCli(['render', 'crate/crate.gltf', '-o', 'x.png', '--views', 'front,side'], tmp)).code).toBe(2);
    expect((await runCli(['render', 'crate/crate.gltf', '-o', 'x.png', '--size', '8'], tmp)).code).toBe(2);
    expect((await runCli(['render', 'crate/crate.gltf', '-o', 'x.png', '--light', '30'], tmp)).code).toBe(2);
    expect(fs.existsSync(path.join(tmp, 'x.png'))).toBe(false);
  });

  it('a file that cannot be read fails with exit 3 and one line naming it; nothing is written', async () => {
    // Source: DESIGN.md exit status (3: an input could not be read) and the one-line message rule.
    const bad = path.join(tmp, 'truncated.glb');
    const good = materialGlb([unitQuad()], {});
    fs.writeFileSync(bad, good.subarray(0, 40));
    const r = await runCli(['render', bad, '-o', 'bad.png'], tmp);
    expect(r.code).toBe(3);
    const lines = r.stderr.trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^tanframe: .*truncated\.glb: /);
    expect(fs.existsSync(path.join(tmp, 'bad.png'))).toBe(false);
  });

  it('draws a JPEG base colour texture (times the factor) and falls back to the factor for another format, saying so', async () => {
    // Source: glTF 2.0, 3.9.2 (base colour = factor x texture, the texture sRGB encoded); the JPEG
    // is written by jpeg-js's encoder at full quality, one flat colour.
    const w = 16, data = new Uint8Array(w * w * 4);
    for (let i = 0; i < w * w; i++) data.set([200, 100, 50, 255], i * 4);
    const jpg = new Uint8Array(jpeg.encode({ width: w, height: w, data }, 100).data);
    // Build the asset JSON by hand around the builder's buffer: a base colour texture from a data: URI.
    const asset = (uri: string) => {
      const { json, bin } = buildGltf([unitQuad()]);
      json.images = [{ uri }];
      json.textures = [{ source: 0 }];
      json.materials = [{ pbrMetallicRoughness: { baseColorTexture: { index: 0 }, baseColorFactor: [1, 0.5, 1, 1] } }];
      return glbBytes(json, bin);
    };
    const jpgUri = `data:image/jpeg;base64,${Buffer.from(jpg).toString('base64')}`;
    const s = await renderBytes(asset(jpgUri), 'j.glb', { views: ['front'], modes: ['shaded'], size: 32, light: [0, 0] });
    const p = pixel(s, 16, 16);
    const lin = (c: number) => (c / 255 <= 0.04045 ? c / 255 / 12.92 : Math.pow((c / 255 + 0.055) / 1.055, 2.4));
    // JPEG keeps a flat colour to within a step or two; the factor halves green in linear light.
    expect(Math.abs(p[0] - srgb(lin(200)) * 255)).toBeLessThanOrEqual(3);
    expect(Math.abs(p[1] - srgb(lin(100) * 0.5) * 255)).toBeLessThanOrEqual(3);
    expect(Math.abs(p[2] - srgb(lin(50)) * 255)).toBeLessThanOrEqual(3);
    // A WebP signature: not decoded; the factor alone, and a note naming the format.
    const webp = new Uint8Array([0x52, 0x49, 0x46, 0x46, 0, 0, 0, 0, 0x57, 0x45, 0x42, 0x50, 0, 0, 0, 0]);
    const built = await buildRenderScene(await readAssetBytes(asset(`data:image/webp;base64,${Buffer.from(webp).toString('base64')}`), 'w.glb'), defaultRenderOptions());
    expect(built.notes.join('\n')).toMatch(/image 0 \(base colour\) is WEBP, not PNG or JPEG; drawn without it/);
    expect(built.scene.materials[0].baseColorTexture).toBeNull();
    expect(built.scene.materials[0].baseColor).toEqual([1, 0.5, 1]);
  });
});
