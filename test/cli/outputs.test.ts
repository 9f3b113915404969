// Picture outputs: file names stay unique, the HTML page keeps to its triangle budget.
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PictureOutputs } from '../../src/cli/outputs.js';
import { buildUvPicture } from '../../src/lib/pictures.js';
import { renderHtml } from '../../src/report/html.js';
import { buildReport } from '../../src/report/json.js';
import type { UvPicture } from '../../src/report/uvPicture.js';

/** A picture of `n` flagged triangles in a row for file `input`. */
function picture(input: string, n: number, mesh = 0): UvPicture {
  const uvs = new Float32Array(n * 6);
  for (let t = 0; t < n; t++) uvs.set([t / n, 0, (t + 1) / n, 0, t / n, 0.5], t * 6);
  const marks = new Uint8Array(n).fill(1);
  const p = buildUvPicture({ mesh, meshName: null, primitive: 0, uvSet: 0 }, Uint32Array.from({ length: n * 3 }, (_, i) => i), uvs, n, marks, new Uint8Array(n), new Uint8Array(n));
  p.input = input;
  return p;
}

let tmp = '';
beforeAll(() => {
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-outputs-'));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

describe('PictureOutputs', () => {
  it('keepsNamesUniqueAndThePageWithinItsBudget', async () => {
    const io = { stdout: () => {}, stderr: () => {}, cwd: tmp, isTTY: false, env: {} };
    const o = { uvMaps: 'maps', html: 'page.html' };
    const out = await new PictureOutputs(o, io, 5).ready();
    // 'a/b.glb' and 'a_b.glb' flatten to the same name: the second gets a suffix.
    out.take([picture('a/b.glb', 3)]);
    out.take([picture('a_b.glb', 2)]);
    out.take([picture('c.glb', 1)]); // 3 + 2 + 1 > 5: left out of the page
    expect(await out.finish()).toEqual({ written: 3, failed: 0 });
    expect(fs.readdirSync(path.join(tmp, 'maps')).sort()).toEqual(['a_b.glb__m0p0.svg', 'a_b.glb__m0p0~2.svg', 'c.glb__m0p0.svg']);
    expect(fs.readFileSync(path.join(tmp, 'maps', 'a_b.glb__m0p0~2.svg'), 'utf8')).toContain('a_b.glb: mesh 0');
    expect(out.html.map((p) => [p.input, p.svg !== null])).toEqual([['a/b.glb', true], ['a_b.glb', true], ['c.glb', false]]);
    expect(out.html[2].omitted).toBe('the page draws at most 5 triangles; see --uv-maps');
    // The page: each inline picture with its own ids, the left-out one named with the reason.
    const files = ['a/b.glb', 'a_b.glb', 'c.glb'].map((input) => ({
      input, output: null, status: 'ok' as const, error: null, gates: [], warnings: [], notes: [], seconds: 0,
      primitives: [{
        mesh: 0, meshName: null, primitive: 0, material: null, uvSet: 0, normalMapped: false, method: 'mikktspace' as const,
        action: 'baked' as const, skipReason: null, triangles: 3, verticesIn: 9, verticesOut: 9, splitVertices: 0, mirrorSeamSplits: 0,
        degenerateUv: { count: 1, triangles: [0] }, degenerateGeometry: { count: 0, triangles: [] }, invalidValues: { count: 0 },
        badNormals: { count: 0 }, mirroredTriangles: 0, uvOverlap: { count: 0, triangles: [] }, storedTangents: null,
        normalsGenerated: null, fallbackTangents: 0,
      }],
    }));
    const html = renderHtml(buildReport('audit', '0.0.0', 'mikktspace', {}, files as any, 0), out.html);
    expect(html).toContain('<pattern id="p1-hatch"');
    expect(html).toContain('<pattern id="p2-hatch"');
    expect((html.match(/<figure /g) ?? []).length).toBe(2);
    expect(html).toContain('mesh 0 primitive 0: picture left out (the page draws at most 5 triangles; see --uv-maps)');
  });

  it('embedsNormalMapsInThePageWithinTheirByteBudget', async () => {
    const io = { stdout: () => {}, stderr: () => {}, cwd: tmp, isTTY: false, env: {} };
    const out = await new PictureOutputs({ uvMaps: 'maps-bg', html: 'page.html' }, io, 1000, null, 250).ready();
    const withMap = (input: string) => ({
      ...picture(input, 1),
      background: { png: new Uint8Array(100).fill(7), width: 2, height: 2, wrapS: 'repeat' as const, wrapT: 'repeat' as const, transform: null },
    });
    // 100 + 100 bytes fit in 250; the third map would make 300.
    out.take([withMap('a.glb'), withMap('b.glb'), withMap('c.glb')]);
    await out.finish();
    const onPage = out.html.map((p) => p.svg!.includes('class="normal-map"'));
    expect(onPage).toEqual([true, true, false]);
    expect(out.html[2].svg).toContain('normal map left out of the page (it embeds at most 250 bytes of them; see --uv-maps)');
    // --uv-maps keeps every picture's map.
    expect(fs.readFileSync(path.join(tmp, 'maps-bg', 'c.glb__m0p0.svg'), 'utf8')).toContain('class="normal-map"');
  });
});
