// UV pictures: what buildUvPicture picks and what renderUvMapSvg draws, and --uv-maps end to end.
import { spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { cornerUv, gridAsset, setCornerUv, writeGridGlb } from '../helpers/gridAsset.js';
import { buildUvPicture } from '../../src/lib/pictures.js';
import { pictureFileName, renderUvMapSvg } from '../../src/report/uvMapSvg.js';
import { PICTURE_DEGENERATE_UV, PICTURE_MIRRORED, PICTURE_OVERLAP } from '../../src/report/uvPicture.js';

const hasXmllint = spawnSync('xmllint', ['--version']).status === 0;
const CHROMIUM = '/usr/bin/chromium';
const hasChromium = fs.existsSync(CHROMIUM);
if (!hasChromium) console.warn(`SKIPPED (in part): ${CHROMIUM} is absent; the UV picture was not drawn in a browser`);
if (!hasXmllint) console.warn('SKIPPED (in part): xmllint is not installed; the SVG well-formedness check did not run');

const HEAD = { mesh: 2, meshName: 'hull', primitive: 1, uvSet: 0 };

/**
 * Five triangles, one vertex list each (v downward as glTF):
 *   t0 plain, t1 mirrored, t2 overlapping (marked), t3 degenerate (three equal UVs at
 *   (0.75, 0.25)), t4 with a NaN UV.
 */
function fiveTriangles() {
  const uvs = new Float32Array([
    0, 0, 0.5, 0, 0.5, 0.5, // t0
    0.5, 0, 1, 0, 1, 0.5, // t1
    0, 0.5, 0.5, 0.5, 0.5, 1, // t2
    0.75, 0.25, 0.75, 0.25, 0.75, 0.25, // t3
    0.6, 0.6, NaN, 0.7, 0.9, 0.9, // t4
  ]);
  const indices = Uint32Array.from({ length: 15 }, (_, i) => i);
  const degenerate = Uint8Array.from([0, 0, 0, 1, 1]);
  const mirrored = Uint8Array.from([0, 1, 0, 0, 0]);
  const overlap = Uint8Array.from([0, 0, 1, 0, 0]);
  return { uvs, indices, degenerate, mirrored, overlap };
}

/** The d attribute of the path with class `cls`, or '' when there is none. */
function pathData(svg: string, cls: string): string {
  const m = new RegExp(`<path class="${cls}" d="([^"]*)"`).exec(svg);
  return m ? m[1] : '';
}

/** The triangles of a path made of `Mx yLx yLx yZ` sub-paths, as [x0, y0, x1, y1, x2, y2] each. */
function subpaths(d: string): number[][] {
  return [...d.matchAll(/M([-\d.]+) ([-\d.]+)L([-\d.]+) ([-\d.]+)L([-\d.]+) ([-\d.]+)Z/g)].map((m) => m.slice(1, 7).map(Number));
}

/**
 * Whether (px, py) is painted by a fill of these triangle sub-paths under SVG's default
 * nonzero rule (SVG 1.1, section 11.3 'fill-rule': a ray from the point, +1 for each crossing
 * of a segment going one way, -1 the other way; painted when the sum is not 0).
 */
function paintedNonzero(tris: number[][], px: number, py: number): boolean {
  let winding = 0;
  for (const t of tris) {
    for (let k = 0; k < 3; k++) {
      const ax = t[k * 2], ay = t[k * 2 + 1], bx = t[((k + 1) % 3) * 2], by = t[((k + 1) % 3) * 2 + 1];
      // Ray toward +x: count the segment when it straddles py and crosses to the right of px.
      if ((ay <= py) !== (by <= py)) {
        const xCross = ax + ((py - ay) * (bx - ax)) / (by - ay);
        if (xCross > px) winding += by > ay ? 1 : -1;
      }
    }
  }
  return winding !== 0;
}

let tmp = '';
beforeAll(() => {
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-svg-'));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

describe('buildUvPicture', () => {
  it('flagsEachTriangleAndLeavesOutUndrawableOnes', () => {
    const m = fiveTriangles();
    const p = buildUvPicture(HEAD, m.indices, m.uvs, 5, m.degenerate, m.mirrored, m.overlap);
    expect(p.triangles).toBe(5);
    expect(p.nonFinite).toBe(1);
    expect([p.degenerateUv, p.mirrored, p.overlap]).toEqual([2, 1, 1]); // counts over all triangles
    // Flagged first (t1, t2, t3), then the plain one (t0); t4 cannot be drawn.
    expect([...p.index]).toEqual([1, 2, 3, 0]);
    expect([...p.flags]).toEqual([PICTURE_MIRRORED, PICTURE_OVERLAP, PICTURE_DEGENERATE_UV, 0]);
    expect([...p.uvs.subarray(12, 18)]).toEqual([0.75, 0.25, 0.75, 0.25, 0.75, 0.25]);
  });

  it('capsTheDrawingFlaggedFirstThenAnEvenSample', () => {
    // 30 triangles in a row, 3 of them degenerate (7, 8, 20); cap 10.
    const n = 30;
    const uvs = new Float32Array(n * 6);
    for (let t = 0; t < n; t++) uvs.set([t / n, 0, (t + 1) / n, 0, t / n, 0.1], t * 6);
    const indices = Uint32Array.from({ length: n * 3 }, (_, i) => i);
    const degenerate = new Uint8Array(n);
    for (const t of [7, 8, 20]) degenerate[t] = 1;
    const p = buildUvPicture(HEAD, indices, uvs, n, degenerate, new Uint8Array(n), new Uint8Array(n), 10);
    expect(p.flags.length).toBe(10);
    expect([...p.index.subarray(0, 3)]).toEqual([7, 8, 20]);
    // 27 plain triangles, 7 taken: the k-th where floor((k + 1) * 7 / 27) steps up.
    const plain = [...Array(n).keys()].filter((t) => ![7, 8, 20].includes(t));
    const expected = plain.filter((_, k) => Math.floor(((k + 1) * 7) / 27) > Math.floor((k * 7) / 27));
    expect([...p.index.subarray(3)]).toEqual(expected);
    const svg = renderUvMapSvg(p);
    expect(svg).toContain('10 of 30 triangles drawn');
    expect(svg).toContain('drawing capped at 200,000 triangles: flagged ones first, then an even sample of the rest');
  });
});

describe('renderUvMapSvg', () => {
  const m = fiveTriangles();
  const picture = { ...buildUvPicture(HEAD, m.indices, m.uvs, 5, m.degenerate, m.mirrored, m.overlap), input: 'props/hull & deck.glb' };

  it('drawsEachKindAndALegendInWords', () => {
    const svg = renderUvMapSvg(picture, { size: 400 });
    expect(svg.startsWith('<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
    // Sub-paths: t0 and t2 and t3 in the plain fill, t1 tinted, t2 hatched on top.
    expect(pathData(svg, 'plain').split('M').length - 1).toBe(3);
    expect(pathData(svg, 'mirrored').split('M').length - 1).toBe(1);
    expect(pathData(svg, 'overlap').split('M').length - 1).toBe(1);
    expect(svg).toMatch(/<path class="overlap" d="[^"]*" fill="url\(#uv-hatch\)"/);
    // One marker (a ring of two arcs and a cross) centred on t3's centroid: UV (0.75, 0.25) ->
    // pixels (16 + 0.75 * 400, 38 + 0.25 * 400) with the 16 px margin and 22 px title band.
    const marks = pathData(svg, 'degenerate');
    expect(marks.match(/a5 5 0 1 0 10 0/g)?.length).toBe(1);
    expect(marks.startsWith(`M${16 + 0.75 * 400 - 5} ${38 + 0.25 * 400}a5`)).toBe(true);
    for (const words of [
      'mirrored: UVs flipped, handedness w = -1 (1)',
      'overlaps another triangle in UV space (1)',
      'degenerate UVs: no UV area, marked at the centroid (2)',
      '1 triangle with NaN or infinite UVs cannot be drawn',
      '4 of 5 triangles drawn',
    ]) expect(svg).toContain(words);
    expect(svg).toContain('props/hull &amp; deck.glb: mesh 2 &quot;hull&quot;, primitive 1, TEXCOORD_0');
    expect(svg).not.toContain('capped');
    expect(renderUvMapSvg(picture, { size: 400 })).toBe(svg); // deterministic
  });

  it('isWellFormedXml', () => {
    if (!hasXmllint) return;
    const file = path.join(tmp, 'one.svg');
    fs.writeFileSync(file, renderUvMapSvg(picture));
    const r = spawnSync('xmllint', ['--noout', file], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
  });

  it('growsBeyondTheUnitSquareAndSaysWhenUvsFallOffIt', () => {
    const uvs = new Float32Array([0, 0, 2.5, 0, 2.5, 0.5]);
    const one = Uint8Array.from([1]), zero = new Uint8Array(1);
    const p = { ...buildUvPicture(HEAD, Uint32Array.from([0, 1, 2]), uvs, 1, zero, one, zero), input: 'x.glb' };
    const svg = renderUvMapSvg(p, { size: 300 });
    // u spans 0..3 (whole units): 300 px for 3 units; the unit square is 100 px wide.
    expect(svg).toMatch(/<rect x="16" y="38" width="100" height="100" fill="none"/);
    expect(svg).not.toContain('lie off the picture');
    const far = { ...p, uvs: new Float32Array([0, 0, 100, 0, 100, 0.5]) };
    expect(renderUvMapSvg(far)).toContain('UVs beyond -15..16 lie off the picture');
  });

  it('hatchesAMirroredTriangleOverAnUnmirroredOneWhereTheyOverlap', () => {
    // Two overlapping triangles, both flagged as overlaps; t1 is mirrored (its UVs run the
    // other way round), so before one winding was enforced the two sub-paths cancelled:
    //   t0 (0.1,0.1) (0.7,0.1) (0.1,0.7)      t1 (0.3,0.3) (0.3,0.9) (0.9,0.3)
    //   the square (0.3..0.4, 0.3..0.4) lies inside both.
    const uvs = new Float32Array([0.1, 0.1, 0.7, 0.1, 0.1, 0.7, 0.3, 0.3, 0.3, 0.9, 0.9, 0.3]);
    const one = Uint8Array.from([1, 1]);
    const p = { ...buildUvPicture(HEAD, Uint32Array.from([0, 1, 2, 3, 4, 5]), uvs, 2, new Uint8Array(2), Uint8Array.from([0, 1]), one), input: 'x.glb' };
    const svg = renderUvMapSvg(p, { size: 400 });
    const tris = subpaths(pathData(svg, 'overlap'));
    expect(tris.length).toBe(2);
    // Picture pixels: x = 16 + u * 400, y = 38 + v * 400. Sample the shared square on a grid.
    let hatched = 0, samples = 0;
    for (let u = 0.305; u < 0.4; u += 0.01) {
      for (let v = 0.305; v < 0.4; v += 0.01) {
        samples++;
        if (paintedNonzero(tris, 16 + u * 400, 38 + v * 400)) hatched++;
      }
    }
    expect(samples).toBeGreaterThan(50);
    expect(hatched).toBe(samples);
    // And outside both triangles nothing is painted.
    expect(paintedNonzero(tris, 16 + 0.9 * 400, 38 + 0.9 * 400)).toBe(false);
  });

  it.skipIf(!hasChromium)('hatchingOfAMirroredOverlapShowsInABrowser', async () => {
    // The triangles of the test above, drawn by a real SVG renderer (Debian's chromium, headless
    // through playwright-core): pixels of the hatching ink inside the shared square.
    const uvs = new Float32Array([0.1, 0.1, 0.7, 0.1, 0.1, 0.7, 0.3, 0.3, 0.3, 0.9, 0.9, 0.3]);
    const p = { ...buildUvPicture(HEAD, Uint32Array.from([0, 1, 2, 3, 4, 5]), uvs, 2, new Uint8Array(2), Uint8Array.from([0, 1]), Uint8Array.from([1, 1])), input: 'x.glb' };
    const svg = renderUvMapSvg(p, { size: 400 });
    const { chromium } = await import('playwright-core');
    const { decode } = await import('fast-png');
    const browser = await chromium.launch({ executablePath: CHROMIUM, args: ['--no-sandbox'] });
    try {
      const tab = await browser.newPage({ viewport: { width: 500, height: 600 } });
      await tab.setContent(`<html><body style="margin:0">${svg}</body></html>`);
      // The shared square: UV 0.3..0.4 -> pixels 136..176 across, 158..198 down.
      const shot = decode(await tab.screenshot({ clip: { x: 138, y: 160, width: 36, height: 36 } }));
      let ink = 0;
      const ch = shot.channels;
      for (let i = 0; i < shot.width * shot.height; i++) {
        const r = shot.data[i * ch], g = shot.data[i * ch + 1], b = shot.data[i * ch + 2];
        // The hatching ink #d9822b (217, 130, 43), allowing for anti-aliasing.
        if (Math.abs(r - 217) < 30 && Math.abs(g - 130) < 30 && Math.abs(b - 43) < 40) ink++;
      }
      expect(ink).toBeGreaterThan(0.15 * shot.width * shot.height);
    } finally {
      await browser.close();
    }
  });

  it('showsHowManyDegenerateMarksFallOnOnePoint', () => {
    // Four zero-area triangles: three collapsed onto UV (0.5, 0.5), one onto (0.25, 0.75).
    const uvs = new Float32Array([
      0.5, 0.5, 0.5, 0.5, 0.5, 0.5,
      0.5, 0.5, 0.5, 0.5, 0.5, 0.5,
      0.25, 0.75, 0.25, 0.75, 0.25, 0.75,
      0.5, 0.5, 0.5, 0.5, 0.5, 0.5,
    ]);
    const p = { ...buildUvPicture(HEAD, Uint32Array.from({ length: 12 }, (_, i) => i), uvs, 4, new Uint8Array(4).fill(1), new Uint8Array(4), new Uint8Array(4)), input: 'x.glb' };
    const svg = renderUvMapSvg(p, { size: 400 });
    // One ring per point, and the count beside the ring of the stacked point only.
    expect(pathData(svg, 'degenerate').match(/a5 5 0 1 0 10 0/g)?.length).toBe(2);
    const labels = [...svg.matchAll(/<text x="([-\d.]+)" y="([-\d.]+)" data-count="(\d+)">([^<]*)<\/text>/g)];
    expect(labels.map((m) => [Number(m[3]), m[4]])).toEqual([[3, '3']]);
    // Beside the mark at (16 + 0.5 * 400, 38 + 0.5 * 400): to its upper right.
    expect(Number(labels[0][1])).toBe(216 + 7);
    expect(Number(labels[0][2])).toBe(238 - 6);
    expect(svg).toContain('marked at the centroid (4)');
    expect(svg).toContain('a number beside a degenerate mark counts the triangles on that point');
  });

  it('drawsTheNormalMapFaintlyBehindTheLayoutWhereItsTransformPlacesIt', () => {
    const png = Uint8Array.from([0x89, 0x50, 0x4e, 0x47, 1, 2, 3]); // bytes are carried, not read
    const bg = { png, width: 4, height: 2, wrapS: 'repeat' as const, wrapT: 'mirror' as const, transform: null };
    const svg = renderUvMapSvg({ ...picture, background: bg }, { size: 400 });
    expect(svg).toContain(`href="data:image/png;base64,${Buffer.from(png).toString('base64')}"`);
    // The map under the triangles: its rect comes before the fills, which turn translucent.
    expect(svg.indexOf('class="normal-map"')).toBeGreaterThan(0);
    expect(svg.indexOf('class="normal-map"')).toBeLessThan(svg.indexOf('class="plain"'));
    expect(svg).toMatch(/<path class="plain" d="[^"]*" fill="#e7e1cf" fill-opacity="0.45"/);
    // Without a transform one texture unit is one UV unit: 400 px, the origin at UV (0, 0).
    // Mirrored repeat along t: a tile two units high with a flipped copy (glTF sampler wrap modes).
    expect(svg).toContain('<pattern id="uv-map" patternUnits="userSpaceOnUse" x="0" y="0" width="1" height="2" patternTransform="matrix(400 0 0 400 16 38)">');
    expect(svg).toContain('<use href="#uv-map-image" transform="translate(0 2) scale(1 -1)"/>');
    expect(svg).toContain('behind the layout, faintly: the normal map of the material (a 4 x 2 copy)');
    // KHR_texture_transform s = 2u + 0.5, t = 2v (rotation 0): texture point (s, t) lies at
    // UV ((s - 0.5) / 2, t / 2), so the pattern's matrix maps (1, 1) to UV (0.25, 0.5).
    const moved = renderUvMapSvg({ ...picture, background: { ...bg, wrapT: 'clamp', transform: [2, 0, 0, 0, 2, 0, 0.5, 0, 1] } }, { size: 400 });
    const m = /patternTransform="matrix\(([^)]*)\)"/.exec(moved)![1].split(' ').map(Number);
    const at = (sx: number, ty: number) => [m[0] * sx + m[2] * ty + m[4], m[1] * sx + m[3] * ty + m[5]];
    expect(at(1, 1)).toEqual([16 + 0.25 * 400, 38 + 0.5 * 400]);
    expect(at(0.5, 0)).toEqual([16, 38]);
    // Clamped along t: one tile far taller than the picture, so the map is drawn once.
    expect(moved).toMatch(/<pattern id="uv-map" patternUnits="userSpaceOnUse" x="0" y="-100000" width="1" height="200000"/);
    expect(moved).toContain('placed through its KHR_texture_transform');
    // No map: no pattern, opaque fills; a note says why when there is a reason.
    expect(svg.replace(/fill-opacity="0.45" /g, '')).not.toBe(svg);
    const none = renderUvMapSvg({ ...picture, backgroundNote: 'the normal map samples TEXCOORD_1, not this set; it is not drawn' });
    expect(none).not.toContain('normal-map');
    expect(none).toContain('the normal map samples TEXCOORD_1, not this set; it is not drawn');
  });

  it('distinctIdPrefixesKeepInlinedPicturesApart', () => {
    const svg = renderUvMapSvg(picture, { idPrefix: 'p7-' });
    expect(svg).toContain('<pattern id="p7-hatch"');
    expect(svg).toContain('url(#p7-hatch)');
    expect(svg).not.toContain('uv-hatch');
  });
});

describe('pictureFileName', () => {
  it('flattensThePathDeterministically', () => {
    expect(pictureFileName('props/crate.gltf', 0, 1)).toBe('props_crate.gltf__m0p1.svg');
    expect(pictureFileName('../a b/c.glb', 2, 3)).toBe('a-b_c.glb__m2p3.svg');
    expect(pictureFileName('../../../x/./y.glb', 0, 0)).toBe('x_y.glb__m0p0.svg'); // no up_ chains
    expect(pictureFileName('C:\\art\\y.glb', 0, 0)).toBe('C-_art_y.glb__m0p0.svg');
    expect(pictureFileName('dir\\sub\\x.obj', 0, 0)).toBe('dir_sub_x.obj__m0p0.svg');
    expect(pictureFileName('/abs/y.glb', 1, 0)).toBe('abs_y.glb__m1p0.svg');
  });
});

describe('--uv-maps', () => {
  it('writesOnePicturePerPrimitiveWithFindingsTheSameForAnyJobs', async () => {
    const dir = path.join(tmp, 'assets');
    await writeGridGlb(dir, 'clean', gridAsset(4));
    const bad = gridAsset(4);
    setCornerUv(bad, 6, 2, cornerUv(bad, 6, 0));
    await writeGridGlb(dir, 'bad', bad);
    const a = path.join(tmp, 'maps-1'), b = path.join(tmp, 'maps-2');
    expect((await runCli(['audit', 'assets', '--uv-maps', 'maps-1', '--jobs', '1', '--quiet'], tmp)).code).toBe(0);
    expect((await runCli(['audit', 'assets', '--uv-maps', 'maps-2', '--jobs', '2', '--quiet'], tmp)).code).toBe(0);
    expect(fs.readdirSync(a)).toEqual(['assets_bad.glb__m0p0.svg']); // the clean grid has no findings
    expect(fs.readdirSync(b)).toEqual(fs.readdirSync(a));
    const svg = fs.readFileSync(path.join(a, 'assets_bad.glb__m0p0.svg'), 'utf8');
    expect(fs.readFileSync(path.join(b, 'assets_bad.glb__m0p0.svg'), 'utf8')).toBe(svg);
    expect(pathData(svg, 'degenerate').match(/a5 5 0 1 0 10 0/g)?.length).toBe(1);
    expect(svg).toContain('32 of 32 triangles drawn');
    // The grid's material has a 1 x 1 PNG normal map: drawn behind the layout.
    expect(svg).toContain('<rect class="normal-map"');
    expect(svg).toContain('the normal map of the material (a 1 x 1 copy)');
  });
});
