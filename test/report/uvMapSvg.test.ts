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
  });
});
