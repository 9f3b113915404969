import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { FINDING_BAD_NORMALS, FINDING_DEGENERATE_GEOMETRY, FINDING_INVALID_VALUES } from '../../src/diagnose/finding.js';
import { decodePng } from '../../src/imaging/png.js';
import { findingColour, lightInView, mismatchColour, NEUTRAL_GREY } from '../../src/render/index.js';
import { FRAME_MARGIN } from '../../src/render/camera.js';
import { runCli } from '../helpers/cli.js';
import { type BuildPrimitive } from '../helpers/gltfBuilder.js';
import { encodeNormal, materialGlb, pixel, renderBytes, srgb } from '../helpers/renderAssets.js';
import { writeFile } from 'node:fs/promises';
import { sphere } from '../helpers/surfaces.js';

const tmp = mkdtempSync(path.join(tmpdir(), 'tanframe-render-modes-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

/** sRGB 8-bit of a surface colour (sRGB 0..1) shaded by `shape` in linear light, as the modes draw it. */
function shadedColour(c: [number, number, number] | number[], shape: number): number[] {
  return c.map((x) => srgb(Math.pow(x <= 0.04045 ? x / 12.92 : ((x + 0.055) / 1.055), x <= 0.04045 ? 1 : 2.4) * shape) * 255);
}

/** The modes' shape term for a face normal (0, 0, 1) under light (az, el): 0.45 + 0.55 max(0, n . l). Our formula (src/render/shade.ts). */
function shapeOf(light: [number, number]): number {
  return 0.45 + 0.55 * Math.max(0, lightInView(light[0], light[1])[2]);
}

function near(p: number[], want: number[], tol = 1): boolean {
  return [0, 1, 2].every((c) => Math.abs(p[c] - want[c]) <= tol);
}

/**
 * Two unit quads side by side at z = 0 facing +Z, each with its own four vertices and stored
 * tangents: the left one (x 0..1) the exact frame (1, 0, 0, +1), the right one (x 1..2) rotated
 * 90 degrees about N, (0, 1, 0, +1).
 *   3 -- 2  7 -- 6
 *   |  / |  |  / |
 *   0 -- 1  4 -- 5
 */
function halvesPlane(): BuildPrimitive {
  const pos: number[] = [], uv: number[] = [], tan: number[] = [];
  for (const [x0, t] of [[0, [1, 0, 0, 1]], [1, [0, 1, 0, 1]]] as const) {
    for (const [x, y] of [[0, 0], [1, 0], [1, 1], [0, 1]]) {
      pos.push(x0 + x, y, 0);
      uv.push((x0 + x) / 2, 1 - y);
      tan.push(...t);
    }
  }
  const n = new Float32Array(24);
  for (let v = 0; v < 8; v++) n[v * 3 + 2] = 1;
  return {
    attributes: {
      POSITION: { array: new Float32Array(pos), type: 'VEC3' }, NORMAL: { array: n, type: 'VEC3' },
      TEXCOORD_0: { array: new Float32Array(uv), type: 'VEC2' }, TANGENT: { array: new Float32Array(tan), type: 'VEC4' },
    },
    indices: new Uint16Array([0, 1, 2, 0, 2, 3, 4, 5, 6, 4, 6, 7]),
    material: 0,
  };
}

describe('mismatch mode', () => {
  // A map tilted 30 degrees toward +t: with tangents turned 90 degrees the mapped normal turns by
  // acos(cos^2 30) = 41.4 degrees, beyond the top of the scale (10 degrees).
  const tilted = encodeNormal([Math.sin(Math.PI / 6), 0, Math.cos(Math.PI / 6)]);

  it('shows neutral where the stored tangents agree with the baked frames and the top of the scale where they are turned 90 degrees', async () => {
    // Source: glTF 2.0, 3.7.2.1 (bitangent = cross(N, t) * w) and the unit-quad frame of
    // test/helpers/gridAsset.ts: (1, 0, 0, +1) is exact for v growing downward.
    const light: [number, number] = [30, 40];
    const glb = materialGlb([halvesPlane()], { normalTexel: [tilted[0], tilted[1], tilted[2]] });
    const size = 64;
    const s = await renderBytes(glb, 'halves.glb', { views: ['front'], modes: ['mismatch'], size, light });
    const shape = shapeOf(light);
    const zero = new Float64Array(3), top = new Float64Array(3);
    mismatchColour(zero, 0);
    mismatchColour(top, 41);
    expect(zero.every((c) => c === NEUTRAL_GREY)).toBe(true);
    const neutral = shadedColour([...zero], shape), hot = shadedColour([...top], shape);
    // The plane spans x 0..2, y 0..1; the bounding sphere has centre (1, 0.5, 0), radius sqrt(1.25).
    const half = Math.sqrt(1.25) / (1 - 2 * FRAME_MARGIN);
    const toPixel = (x: number, y: number) => [Math.floor(((x - 1) / half + 1) / 2 * size), Math.floor((1 - (y - 0.5) / half) / 2 * size)];
    for (const [x, y] of [[0.3, 0.3], [0.5, 0.5], [0.8, 0.7]]) {
      const [px, py] = toPixel(x, y);
      expect(near(pixel(s, px, py), neutral), `left half at ${x},${y}: ${pixel(s, px, py)} vs ${neutral}`).toBe(true);
      const [qx, qy] = toPixel(x + 1, y);
      expect(near(pixel(s, qx, qy), hot), `right half at ${x + 1},${y}: ${pixel(s, qx, qy)} vs ${hot}`).toBe(true);
    }
  });

  it('a file baked by tanframe shows neutral everywhere', async () => {
    // The bake writes the frames the renderer recomputes, so the stored and baked normal-mapped
    // normals agree at every pixel (a sphere band with a tilted map, stored tangents turned first).
    const m = sphere({ n: 16, uvOrigin: 'top-left' });
    const wrong = new Float32Array((m.positions.length / 3) * 4);
    for (let v = 0; v < m.positions.length / 3; v++) { wrong[v * 4 + 2] = 1; wrong[v * 4 + 3] = 1; }
    const glb = materialGlb([{
      attributes: {
        POSITION: { array: m.positions, type: 'VEC3' }, NORMAL: { array: m.normals, type: 'VEC3' },
        TEXCOORD_0: { array: m.uvs, type: 'VEC2' }, TANGENT: { array: wrong, type: 'VEC4' },
      },
      indices: m.indices, material: 0,
    }], { normalTexel: [tilted[0], tilted[1], tilted[2]] });
    const input = path.join(tmp, 'band.glb'), baked = path.join(tmp, 'band.baked.glb');
    await writeFile(input, glb);
    const before = await renderBytes(glb, 'band.glb', { views: ['right'], modes: ['mismatch'], size: 48 });
    expect((await runCli(['bake', input, '-o', baked, '--quiet'], tmp)).code).toBe(0);
    const after = await renderBytes(new Uint8Array(readFileSync(baked)), 'band.baked.glb', { views: ['right'], modes: ['mismatch'], size: 48 });
    let drawn = 0, coloured = 0, colouredBefore = 0;
    for (let y = 0; y < 48; y++) {
      for (let x = 0; x < 48; x++) {
        const p = pixel(after, x, y);
        if (p[3] === 0) continue;
        drawn++;
        // Neutral is grey: red, green and blue equal (the heat scale's other stops are not).
        if (Math.max(Math.abs(p[0] - p[1]), Math.abs(p[1] - p[2]), Math.abs(p[0] - p[2])) > 1) coloured++;
        const q = pixel(before, x, y);
        if (Math.abs(q[0] - q[2]) > 1) colouredBefore++;
      }
    }
    expect(drawn).toBeGreaterThan(500);
    expect(coloured).toBe(0);
    // The input's turned tangents do show: the check can see a mismatch.
    expect(colouredBefore).toBeGreaterThan(drawn / 2);
  });

  it('without stored tangents compares against the lengyel frames and says so', async () => {
    const glb = materialGlb([{ ...halvesPlane(), attributes: { ...halvesPlane().attributes, TANGENT: undefined as any } }].map((p) => {
      const { TANGENT: _t, ...rest } = p.attributes;
      return { ...p, attributes: rest };
    }), { normalTexel: [tilted[0], tilted[1], tilted[2]] });
    const s = await renderBytes(glb, 'plain.glb', { views: ['front', 'back'], modes: ['mismatch'], size: 64 });
    // The legend text is drawn in the band: compare with the same sheet of a file with stored tangents.
    const t = await renderBytes(materialGlb([halvesPlane()], { normalTexel: [tilted[0], tilted[1], tilted[2]] }), 'halves.glb', { views: ['front', 'back'], modes: ['mismatch'], size: 64 });
    expect(s.width).toBeGreaterThan(t.width); // "(no stored tangents)" is the widest line
  });
});

describe('findings mode', () => {
  /**
   * A 4 x 4 grid of the plane z = 0 (x, y in 0..4) and, in front of it at z = 0.01, three
   * planted triangles with vertices of their own and UVs apart from the grid's:
   *   A (degenerate geometry): corners on one line around (0.8, 3.2);
   *   B (NaN): a NaN in one normal, around (3.1, 3.1);
   *   C (flipped normals): normals -Z on a +Z-facing triangle, around (2.1, 0.9).
   */
  function plantedAsset(): { prim: BuildPrimitive; centroids: Record<string, [number, number]> } {
    const pos: number[] = [], nor: number[] = [], uv: number[] = [], idx: number[] = [];
    const vert = (x: number, y: number, z: number, n: number[], u: number, v: number) => {
      pos.push(x, y, z); nor.push(...n); uv.push(u, v);
      return pos.length / 3 - 1;
    };
    for (let j = 0; j <= 4; j++) for (let i = 0; i <= 4; i++) vert(i, j, 0, [0, 0, 1], i / 4, 1 - j / 4);
    for (let j = 0; j < 4; j++) {
      for (let i = 0; i < 4; i++) {
        const a = j * 5 + i;
        idx.push(a, a + 1, a + 6, a, a + 6, a + 5);
      }
    }
    const tri = (c: number[][], n: number[][], u0: number) => {
      const ids = c.map((p, k) => vert(p[0], p[1], 0.01, n[k], u0 + [0, 0.5, 0][k], 2 + [0, 0, 0.5][k]));
      idx.push(...ids);
    };
    const up = [0, 0, 1], down = [0, 0, -1];
    tri([[0.5, 3.0], [1.1, 3.4], [0.8, 3.2]], [up, up, up], 2);
    tri([[2.8, 2.8], [3.4, 2.8], [3.1, 3.4]], [[NaN, 0, 1], up, up], 3);
    tri([[1.8, 0.6], [2.4, 0.6], [2.1, 1.2]], [down, down, down], 4);
    return {
      prim: {
        attributes: {
          POSITION: { array: new Float32Array(pos), type: 'VEC3' }, NORMAL: { array: new Float32Array(nor), type: 'VEC3' },
          TEXCOORD_0: { array: new Float32Array(uv), type: 'VEC2' },
        },
        indices: new Uint32Array(idx), material: 0,
      },
      centroids: { degenerate: [0.8, 3.2], nan: [3.1, 3.0], flipped: [2.1, 0.8] },
    };
  }

  it('colours planted degenerate, NaN and flipped-normal triangles at their projected centroids, and only there', async () => {
    // Source: the projection of DESIGN.md's front view (orthographic, framing the bounding sphere),
    // computed here by hand: centre (2, 2), radius sqrt(8) over the grid's corners.
    const { prim, centroids } = plantedAsset();
    const glb = materialGlb([prim], {});
    const size = 128, light: [number, number] = [30, 40];
    const s = await renderBytes(glb, 'planted.glb', { views: ['front'], modes: ['findings'], size, light });
    const half = Math.sqrt(8.0001) / (1 - 2 * FRAME_MARGIN);
    const toPixel = (x: number, y: number) => [Math.floor(((x - 2) / half + 1) / 2 * size), Math.floor((1 - (y - 2) / half) / 2 * size)];
    const shape = shapeOf(light);
    const expectAt = (where: [number, number], bit: number, what: string) => {
      const [px, py] = toPixel(where[0], where[1]);
      const want = bit === FINDING_DEGENERATE_GEOMETRY ? findingColour(bit).map((c) => srgb(srgbLinear(c)) * 255) : shadedColour(findingColour(bit), shape);
      expect(near(pixel(s, px, py), want, 2), `${what} at pixel ${px},${py}: ${pixel(s, px, py)} vs ${want}`).toBe(true);
    };
    // A zero-area triangle covers no sample: it is drawn as a marker at its projected centroid.
    expectAt(centroids.degenerate, FINDING_DEGENERATE_GEOMETRY, 'degenerate geometry');
    expectAt(centroids.nan, FINDING_INVALID_VALUES, 'NaN normal');
    expectAt(centroids.flipped, FINDING_BAD_NORMALS, 'flipped normals');
    // Only there: every other drawn pixel is the neutral grey (some pixels away from the planted ones).
    const grey = shadedColour([NEUTRAL_GREY, NEUTRAL_GREY, NEUTRAL_GREY], shape);
    let checked = 0;
    for (let py = 0; py < size; py++) {
      for (let px = 0; px < size; px++) {
        const p = pixel(s, px, py);
        if (p[3] < 255) continue;
        const far = Object.values(centroids).every((c) => {
          const [cx, cy] = toPixel(c[0], c[1]);
          return Math.max(Math.abs(px - cx), Math.abs(py - cy)) > 12;
        });
        if (!far) continue;
        checked++;
        expect(near(p, grey), `pixel ${px},${py}: ${p} vs grey ${grey}`).toBe(true);
      }
    }
    expect(checked).toBeGreaterThan(3000);
  });
});

function srgbLinear(c: number): number {
  return c <= 0.04045 ? c / 12.92 : Math.pow((c + 0.055) / 1.055, 2.4);
}

describe('determinism', () => {
  it('renders identical PNG bytes across runs', async () => {
    const m = sphere({ n: 12, uvOrigin: 'top-left' });
    const glb = materialGlb([{
      attributes: { POSITION: { array: m.positions, type: 'VEC3' }, NORMAL: { array: m.normals, type: 'VEC3' }, TEXCOORD_0: { array: m.uvs, type: 'VEC2' } },
      indices: m.indices, material: 0,
    }], { normalTexel: encodeNormal([0.3, -0.2, 0.9]).slice(0, 3) as [number, number, number] });
    const input = path.join(tmp, 'det.glb');
    await writeFile(input, glb);
    const a = path.join(tmp, 'a.png'), b = path.join(tmp, 'b.png');
    expect((await runCli(['render', input, '-o', a, '--size', '64', '--quiet'], tmp)).code).toBe(0);
    expect((await runCli(['render', input, '-o', b, '--size', '64', '--quiet'], tmp)).code).toBe(0);
    expect(Buffer.compare(readFileSync(a), readFileSync(b))).toBe(0);
    const img = decodePng(new Uint8Array(readFileSync(a)));
    expect(img.channels).toBe(4);
  });
});
