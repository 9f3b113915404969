import { describe, expect, it } from 'vitest';
import { convertNormalMap, flipGreen, type ConvertMapOptions, type MapPart } from '../../src/imaging/convert.js';
import type { PngImage } from '../../src/imaging/png.js';
import { mirroredSheet, noisyScan, sphere } from '../helpers/surfaces.js';
import { compareCovered, coverageOf, enc, frameSet, paint, part, type UvMesh } from './mapHelpers.js';

const opts = (o: Partial<ConvertMapOptions>): ConvertMapOptions => ({
  from: 'tangent', to: 'object', inGreen: 'up', outGreen: 'up', padding: 0, ...o,
});

/** A smooth bumpy tangent-space field (unit after normalising), in [-0.6, 0.6] x [-0.6, 0.6] x 1. */
function bumps(u: number, v: number): [number, number, number] {
  return [0.6 * Math.sin(23 * u + 3 * v), 0.6 * Math.cos(17 * v - 5 * u), 1];
}

/** Object-space directions spread over the sphere of directions, varying smoothly. */
function directions(u: number, v: number): [number, number, number] {
  const th = Math.PI * (0.1 + 0.8 * v), ph = 2 * Math.PI * u + 1.3 * Math.sin(5 * v);
  return [Math.sin(th) * Math.cos(ph), Math.sin(th) * Math.sin(ph), Math.cos(th)];
}

function decode(img: PngImage, p: number): [number, number, number] {
  const max = img.depth === 16 ? 65535 : 255;
  const o = p * img.channels;
  return [(img.data[o] / max) * 2 - 1, (img.data[o + 1] / max) * 2 - 1, (img.data[o + 2] / max) * 2 - 1];
}

function angleDeg(a: number[], b: number[]): number {
  const la = Math.hypot(a[0], a[1], a[2]), lb = Math.hypot(b[0], b[1], b[2]);
  const c = (a[0] * b[0] + a[1] * b[1] + a[2] * b[2]) / (la * lb);
  return (Math.acos(Math.min(1, Math.max(-1, c))) * 180) / Math.PI;
}

describe('tangent -> object: the decoding convention', () => {
  it('a flat map (128,128,255) gives the interpolated vertex normal at every covered texel, within one 8-bit step', () => {
    // Source: common practice (texel 128,128,255 is the unperturbed normal, METHODS.md) and the
    // decoding convention: the result is normalize(interpolated N) when x = y = 0.
    const W = 192, H = 160;
    const mesh: UvMesh = sphere({ n: 12, uvOrigin: 'top-left' });
    const flat = paint(W, H, 8, () => [0, 0, 1]);
    expect(Array.from(flat.data.subarray(0, 3))).toEqual([128, 128, 255]);
    const { image, stats } = convertNormalMap(flat, [part(mesh, 'mikktspace', null)], opts({}));
    // Independent interpolation: barycentric weights of each texel centre strictly inside a triangle.
    let checked = 0, worst = 0;
    const P = mesh.uvs, I = mesh.indices, N = mesh.normals;
    for (let t = 0; t < I.length / 3; t++) {
      const a = I[t * 3], b = I[t * 3 + 1], c = I[t * 3 + 2];
      const ax = P[a * 2] * W, ay = P[a * 2 + 1] * H, bx = P[b * 2] * W, by = P[b * 2 + 1] * H, cx = P[c * 2] * W, cy = P[c * 2 + 1] * H;
      const den = (by - cy) * (ax - cx) + (cx - bx) * (ay - cy);
      for (let y = Math.floor(Math.min(ay, by, cy)); y <= Math.ceil(Math.max(ay, by, cy)); y++) {
        for (let x = Math.floor(Math.min(ax, bx, cx)); x <= Math.ceil(Math.max(ax, bx, cx)); x++) {
          if (x < 0 || y < 0 || x >= W || y >= H) continue;
          const px = x + 0.5, py = y + 0.5;
          const l0 = ((by - cy) * (px - cx) + (cx - bx) * (py - cy)) / den;
          const l1 = ((cy - ay) * (px - cx) + (ax - cx) * (py - cy)) / den;
          const l2 = 1 - l0 - l1;
          if (Math.min(l0, l1, l2) < 1e-6) continue;
          const n = [0, 1, 2].map((k) => l0 * N[a * 3 + k] + l1 * N[b * 3 + k] + l2 * N[c * 3 + k]);
          const len = Math.hypot(n[0], n[1], n[2]);
          const o = (y * W + x) * 3;
          for (let k = 0; k < 3; k++) worst = Math.max(worst, Math.abs(image.data[o + k] - enc(n[k] / len, 255)));
          checked++;
        }
      }
    }
    expect(checked).toBeGreaterThan(0.95 * stats.covered);
    expect(worst).toBeLessThanOrEqual(1);
    expect(stats.covered).toBe(W * H); // the sphere band's UVs fill [0,1]^2
  });

  it('+X leans along dP/du and +Y (green up) toward image-up on an analytic sphere, converging with mesh spacing', () => {
    // Source: analytic surface, differential geometry (sphere: dP/du along the azimuth, image-up =
    // decreasing glTF v = increasing polar height) and the glTF convention that the normal
    // texture's green channel is +Y, up in the image (glTF 2.0 specification, normalTexture).
    const W = 256, H = 128, a = (30 * Math.PI) / 180;
    for (const axis of ['x', 'y'] as const) {
      const src = paint(W, H, 16, () => (axis === 'x' ? [Math.sin(a), 0, Math.cos(a)] : [0, Math.sin(a), Math.cos(a)]));
      const worst: number[] = [];
      for (const n of [32, 64]) {
        const mesh: UvMesh = sphere({ n, uvOrigin: 'top-left' });
        const { image } = convertNormalMap(src, [part(mesh, 'mikktspace', null)], opts({}));
        let w = 0;
        for (let y = 0; y < H; y++) {
          for (let x = 0; x < W; x++) {
            const u = (x + 0.5) / W, vUp = 1 - (y + 0.5) / H;
            const th = Math.PI * (0.9 - 0.8 * vUp), ph = 2 * Math.PI * u;
            const nrm = [Math.sin(th) * Math.cos(ph), Math.sin(th) * Math.sin(ph), Math.cos(th)];
            const dir = axis === 'x' ? [-Math.sin(ph), Math.cos(ph), 0] : [-Math.cos(th) * Math.cos(ph), -Math.cos(th) * Math.sin(ph), Math.sin(th)];
            const expected = [0, 1, 2].map((k) => Math.cos(a) * nrm[k] + Math.sin(a) * dir[k]);
            w = Math.max(w, angleDeg(decode(image, y * W + x), expected));
          }
        }
        worst.push(w);
      }
      // A wrong axis or handedness would be off by tens of degrees; the discretisation error
      // shrinks as the mesh is refined.
      expect(worst[1], `axis ${axis}`).toBeLessThan(1);
      expect(worst[1], `axis ${axis}`).toBeLessThan(worst[0] / 1.8);
    }
  });

  it('green down reads the stored green as -Y', () => {
    const W = 64, H = 64;
    const mesh: UvMesh = sphere({ n: 8, uvOrigin: 'top-left' });
    const up = paint(W, H, 8, bumps);
    const down = flipGreen(up);
    const a = convertNormalMap(up, [part(mesh, 'mikktspace', null)], opts({ inGreen: 'up' })).image;
    const b = convertNormalMap(down, [part(mesh, 'mikktspace', null)], opts({ inGreen: 'down' })).image;
    const cmp = compareCovered(a, b, coverageOf(mesh, W, H));
    expect(cmp.maxDiff).toBeLessThanOrEqual(1);
    // ... and reading it the wrong way round gives a different map.
    const c = convertNormalMap(down, [part(mesh, 'mikktspace', null)], opts({ inGreen: 'up' })).image;
    expect(compareCovered(a, c, coverageOf(mesh, W, H)).maxDiff).toBeGreaterThan(20);
  });
});

// Source: METHODS.md "Normal-map spaces" (the decoding convention; 8-bit encoding
// c = round((x * 0.5 + 0.5) * 255), common practice) and the acceptance figures of the
// convert-map issue (>= 99.9% of covered texels within one 8-bit step, two 16-bit steps).
describe('round trips', () => {
  const meshes: [string, UvMesh][] = [
    ['sphere', sphere({ n: 24, uvOrigin: 'top-left' })],
    ['mirrored sheet', mirroredSheet({ n: 16, uvOrigin: 'top-left' })],
    ['noisy scan', noisyScan({ n: 20, uvOrigin: 'top-left' })],
  ];
  for (const [name, mesh] of meshes) {
    for (const depth of [8, 16] as const) {
      const steps = depth === 8 ? 1 : 2;
      it(`${name}, ${depth}-bit: tangent -> object -> tangent within ${steps} step(s) on >= 99.9% of covered texels`, () => {
        const W = 256, H = 256;
        const src = paint(W, H, depth, bumps);
        const mask = coverageOf(mesh, W, H);
        const obj = convertNormalMap(src, [part(mesh, 'mikktspace', null)], opts({ from: 'tangent', to: 'object' })).image;
        const back = convertNormalMap(obj, [part(mesh, null, 'mikktspace')], opts({ from: 'object', to: 'tangent' })).image;
        const cmp = compareCovered(src, back, mask);
        console.log(`round trip T->O->T ${name} ${depth}-bit: ${(cmp.within(steps) * 100).toFixed(3)}% within ${steps}, max ${cmp.maxDiff} over ${cmp.texels} texels`);
        expect(cmp.texels).toBeGreaterThan(W * H * 0.2);
        expect(cmp.within(steps)).toBeGreaterThanOrEqual(0.999);
      });
      it(`${name}, ${depth}-bit: object -> tangent -> object within ${steps} step(s) on >= 99.9% of covered texels`, () => {
        const W = 256, H = 256;
        const src = paint(W, H, depth, directions);
        const mask = coverageOf(mesh, W, H);
        const ts = convertNormalMap(src, [part(mesh, null, 'mikktspace')], opts({ from: 'object', to: 'tangent' })).image;
        const back = convertNormalMap(ts, [part(mesh, 'mikktspace', null)], opts({ from: 'tangent', to: 'object' })).image;
        const cmp = compareCovered(src, back, mask);
        console.log(`round trip O->T->O ${name} ${depth}-bit: ${(cmp.within(steps) * 100).toFixed(3)}% within ${steps}, max ${cmp.maxDiff} over ${cmp.texels} texels`);
        expect(cmp.within(steps)).toBeGreaterThanOrEqual(0.999);
      });
    }
  }

  it('re-basing lengyel -> mikktspace -> lengyel returns the map within one step on covered texels', () => {
    const W = 256, H = 256;
    const mesh: UvMesh = noisyScan({ n: 20, uvOrigin: 'top-left' });
    const src = paint(W, H, 8, bumps);
    const mask = coverageOf(mesh, W, H);
    const there = convertNormalMap(src, [part(mesh, 'lengyel', 'mikktspace')], opts({ from: 'tangent', to: 'tangent' })).image;
    const back = convertNormalMap(there, [part(mesh, 'mikktspace', 'lengyel')], opts({ from: 'tangent', to: 'tangent' })).image;
    // The two methods' frames really differ on this mesh, so the map changed on the way.
    expect(compareCovered(src, there, mask).maxDiff).toBeGreaterThan(2);
    const cmp = compareCovered(src, back, mask);
    console.log(`re-base L->M->L 8-bit: ${(cmp.within(1) * 100).toFixed(3)}% within 1, max ${cmp.maxDiff} over ${cmp.texels} texels`);
    expect(cmp.maxDiff).toBeLessThanOrEqual(1);
  });
});

describe('analytic sphere: an exact object-space map is almost flat in tangent space', () => {
  it('mean deviation from (0,0,1) below 1 degree at 1024 x 1024', () => {
    // Source: analytic surface, differential geometry: the unit sphere's normal at polar angle
    // theta and azimuth phi is (sin theta cos phi, sin theta sin phi, cos theta); the generator's
    // parametrisation is theta = pi (0.9 - 0.8 v_up), phi = 2 pi u, v_up = 1 - v_glTF.
    const W = 1024, H = 1024;
    const mesh: UvMesh = sphere({ n: 32, uvOrigin: 'top-left' });
    for (const depth of [8, 16] as const) {
      const src = paint(W, H, depth, (u, v) => {
        const th = Math.PI * (0.9 - 0.8 * (1 - v)), ph = 2 * Math.PI * u;
        return [Math.sin(th) * Math.cos(ph), Math.sin(th) * Math.sin(ph), Math.cos(th)];
      });
      const { image, stats } = convertNormalMap(src, [part(mesh, null, 'mikktspace')], opts({ from: 'object', to: 'tangent' }));
      let sum = 0, worst = 0;
      for (let p = 0; p < W * H; p++) {
        const a = angleDeg(decode(image, p), [0, 0, 1]);
        sum += a; worst = Math.max(worst, a);
      }
      expect(stats.covered).toBe(W * H);
      // 8-bit: most of the figure is the encoding itself, (128,128,255) decodes 0.32 degrees off (0,0,1).
      console.log(`sphere 1024x1024 ${depth}-bit object->tangent: mean deviation ${(sum / (W * H)).toFixed(4)} deg, max ${worst.toFixed(3)} deg`);
      expect(sum / (W * H)).toBeLessThan(1);
    }
  });
});

describe('green flip', () => {
  it('twice is the identity, bit for bit, alpha untouched', () => {
    // Source: glTF 2.0 specification (normalTexture: green is +Y) and METHODS.md: a -Y map is
    // converted by inverting its green channel, c' = max - c.
    for (const depth of [8, 16] as const) {
      const src = paint(33, 17, depth, bumps, true);
      const once = flipGreen(src);
      const max = depth === 16 ? 65535 : 255;
      for (let p = 0; p < 33 * 17; p++) {
        expect(once.data[p * 4 + 1]).toBe(max - src.data[p * 4 + 1]);
        expect(once.data[p * 4]).toBe(src.data[p * 4]);
        expect(once.data[p * 4 + 3]).toBe(src.data[p * 4 + 3]);
      }
      expect(Array.from(flipGreen(once).data)).toEqual(Array.from(src.data));
    }
  });

  it('changes depth exactly when asked (8 -> 16 -> 8 is the identity)', () => {
    const src = paint(9, 9, 8, bumps, true);
    const wide = flipGreen(src, 16);
    expect(wide.depth).toBe(16);
    expect(wide.data[3]).toBe(src.data[3] * 257);
    expect(Array.from(flipGreen(wide, 8).data)).toEqual(Array.from(src.data));
  });
});

describe('coverage, conflicts, padding, background and alpha', () => {
  //  Two triangles over the same UV area (overlapping islands):
  //   (0.1,0.1) +------+ (0.9,0.1)
  //             |    /
  //             |  /        triangle A = B in UV; A comes first
  //   (0.1,0.9) +/
  function overlapping(): { a: MapPart; both: MapPart } {
    const uvs = new Float32Array([0.1, 0.1, 0.9, 0.1, 0.1, 0.9, 0.1, 0.1, 0.9, 0.1, 0.1, 0.9]);
    // A: normal +Z, tangent +X; B: normal +X, tangent +Y.
    const normals = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0, 0, 1, 0, 0]);
    const tangents = new Float32Array([1, 0, 0, 1, 1, 0, 0, 1, 1, 0, 0, 1, 0, 1, 0, 1, 0, 1, 0, 1, 0, 1, 0, 1]);
    const both: MapPart = { decode: { uvs, normals, tangents, indices: new Uint32Array([0, 1, 2, 3, 4, 5]) }, encode: null };
    const a: MapPart = { decode: { uvs, normals, tangents, indices: new Uint32Array([0, 1, 2]) }, encode: null };
    return { a, both };
  }

  it('counts texels covered twice and keeps the first writer', () => {
    const src = paint(32, 32, 8, () => [0, 0, 1]);
    const { a, both } = overlapping();
    const one = convertNormalMap(src, [a], opts({}));
    const two = convertNormalMap(src, [both], opts({}));
    expect(one.stats.conflicts).toBe(0);
    expect(two.stats.conflicts).toBe(one.stats.covered);
    expect(two.stats.covered).toBe(one.stats.covered);
    expect(Array.from(two.image.data)).toEqual(Array.from(one.image.data));
    // The first writer's normal is +Z: (128, 128, 255) everywhere it covers.
    const mask = new Uint32Array(32 * 32);
    const first = two.image;
    let covered = 0;
    for (let p = 0; p < 32 * 32; p++) {
      if (first.data[p * 3 + 2] === 255) { covered++; mask[p] = 1; }
    }
    expect(covered).toBe(one.stats.covered);
  });

  it('pads ring by ring, leaves the neutral value beyond, and copies alpha', () => {
    const W = 40, H = 40;
    const src = paint(W, H, 8, () => [0.3, -0.2, 1], true);
    const { a } = overlapping();
    const none = convertNormalMap(src, [a], opts({ padding: 0 }));
    const padded = convertNormalMap(src, [a], opts({ padding: 3 }));
    expect(none.stats.padded).toBe(0);
    expect(padded.stats.padded).toBeGreaterThan(0);
    const ring = (img: PngImage, p: number) => Array.from(img.data.subarray(p * 4, p * 4 + 3));
    let changed = 0;
    for (let p = 0; p < W * H; p++) {
      // Alpha is the input's everywhere.
      expect(padded.image.data[p * 4 + 3]).toBe(src.data[p * 4 + 3]);
      const before = ring(none.image, p);
      const after = ring(padded.image, p);
      if (before.join() !== after.join()) {
        changed++;
        // Only texels that were background (object space: 128,128,128) change.
        expect(before).toEqual([128, 128, 128]);
      }
    }
    expect(changed).toBe(padded.stats.padded);
    // Texel (0, 0) is more than 3 texels from the triangle: background.
    expect(ring(padded.image, 0)).toEqual([128, 128, 128]);
    // A texel just outside the hypotenuse got a value near the covered ones.
    const y = 20, x = 20; // centre (20.5, 20.5) lies outside u + v <= 1 - ... of the triangle
    expect(none.stats.covered).toBeGreaterThan(0);
    const v = ring(padded.image, y * W + x);
    expect(v).not.toEqual([128, 128, 128]);
  });

  it('tangent-space output fills the background with (0,0,1)', () => {
    const W = 16, H = 16;
    const src = paint(W, H, 8, () => [0, 0, 1]);
    const { a } = overlapping();
    const p: MapPart = { decode: null, encode: a.decode };
    const { image } = convertNormalMap(src, [p], opts({ from: 'object', to: 'tangent' }));
    expect(Array.from(image.data.subarray(0, 3))).toEqual([128, 128, 255]);
  });

  it('a shared mirror seam under lengyel (sign interpolating through 0) converts without failing', () => {
    // One frame per vertex (lengyel never splits): seam vertices are shared by triangles whose
    // other corners have the opposite sign, so inside those triangles the interpolated sign
    // passes through zero and the bitangent vanishes on a line: tangent space there cannot
    // hold the y component, so only texels in those seam triangles may miss the round trip.
    const mesh: UvMesh = mirroredSheet({ n: 8, seam: 'shared', uvOrigin: 'top-left' });
    const W = 128, H = 128;
    const src = paint(W, H, 8, directions);
    const ts = convertNormalMap(src, [part(mesh, null, 'lengyel')], opts({ from: 'object', to: 'tangent' }));
    const back = convertNormalMap(ts.image, [part(mesh, 'lengyel', null)], opts({ from: 'tangent', to: 'object' })).image;
    for (let i = 0; i < back.data.length; i++) expect(Number.isInteger(back.data[i])).toBe(true);
    // Both halves share one UV square (u = |s|, the seam at u = 0); the seam triangles are the
    // first column of quads, u < 1/8. Every texel right of them comes back within one step.
    const mask = coverageOf(mesh, W, H);
    for (let p = 0; p < W * H; p++) if ((p % W) < W / 8 + 1) mask[p] = 0;
    const cmp = compareCovered(src, back, mask);
    expect(cmp.texels).toBeGreaterThan(0.8 * W * H);
    expect(cmp.maxDiff).toBeLessThanOrEqual(1);
  });

  it('refuses grey images', () => {
    const grey: PngImage = { width: 2, height: 2, channels: 1, depth: 8, data: new Uint8Array(4) };
    expect(() => convertNormalMap(grey, [], opts({}))).toThrow(/grey image holds no normal directions/);
    expect(() => flipGreen(grey)).toThrow(/RGB or RGBA/);
  });

  it('frame sets of the two methods list the same triangles with the same UVs', () => {
    const mesh: UvMesh = mirroredSheet({ n: 6, uvOrigin: 'top-left' });
    const m = frameSet(mesh, 'mikktspace'), l = frameSet(mesh, 'lengyel');
    expect(m.indices.length).toBe(l.indices.length);
    for (let c = 0; c < m.indices.length; c++) {
      expect(m.uvs[m.indices[c] * 2]).toBe(l.uvs[l.indices[c] * 2]);
      expect(m.uvs[m.indices[c] * 2 + 1]).toBe(l.uvs[l.indices[c] * 2 + 1]);
    }
  });
});

describe('the texel budget', () => {
  /** A unit quad whose UVs are the square [0, k] x [0, k] (k x k tiles). */
  function quad(k: number): UvMesh {
    return {
      positions: new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]),
      normals: new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]),
      uvs: new Float32Array([0, 0, k, 0, k, k, 0, k]),
      indices: new Uint32Array([0, 1, 2, 0, 2, 3]),
    };
  }
  const flat = paint(32, 32, 8, () => [0, 0, 1]);
  const options: ConvertMapOptions = { from: 'tangent', to: 'object', inGreen: 'up', outGreen: 'up', padding: 0 };

  it('accepts layouts that cover the map a few times over (here 3 x 3 wrapped tiles: 9 times)', () => {
    const r = convertNormalMap(flat, [part(quad(3), 'mikktspace', null)], options);
    expect(r.stats.covered).toBe(32 * 32);
    expect(r.stats.conflicts).toBe(32 * 32);
  });

  it("refuses with 'too-large' before rasterising when the UVs wrap over 8 x 8 tiles (64 times the map)", () => {
    let err: any;
    let progress = 0;
    try { convertNormalMap(flat, [part(quad(8), 'mikktspace', null)], options, () => { progress++; }); } catch (e) { err = e; }
    expect(err?.code).toBe('too-large');
    expect(err.message).toMatch(/^the UV triangles would take more than 16 texel steps per texel of the 32 x 32 map/);
    expect(progress).toBe(0); // no triangle was rasterised
  });
});
