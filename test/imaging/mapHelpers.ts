/**
 * Test helpers for normal-map conversion: frame sets from our own frame solve, images made
 * from a function per texel centre, and comparisons over covered texels.
 */
import { computeFrames } from '../../src/frames/computeFrames.js';
import type { FrameSet, MapPart } from '../../src/imaging/convert.js';
import type { PngImage } from '../../src/imaging/png.js';
import { countCoverage } from '../../src/imaging/rasterize.js';
import type { FrameMethod } from '../../src/mesh/types.js';

/** A mesh in glTF UV convention (v down). */
export interface UvMesh {
  positions: Float32Array;
  normals: Float32Array;
  uvs: Float32Array;
  indices: Uint32Array;
}

function gather(src: Float32Array, k: number, source: Uint32Array): Float32Array {
  const out = new Float32Array(source.length * k);
  for (let i = 0; i < source.length; i++) for (let j = 0; j < k; j++) out[i * k + j] = src[source[i] * k + j];
  return out;
}

/** Frames of `mesh` from computeFrames (glTF UV origin), as a FrameSet. */
export function frameSet(mesh: UvMesh, method: FrameMethod): FrameSet {
  const r = computeFrames(
    { positions: mesh.positions, normals: mesh.normals, uvs: mesh.uvs, indices: mesh.indices },
    { method, uvOrigin: 'top-left' },
  );
  return { uvs: gather(mesh.uvs, 2, r.sourceVertex), normals: gather(mesh.normals, 3, r.sourceVertex), tangents: r.tangents, indices: r.indices };
}

/** A part that decodes with `from` frames and encodes with `to` frames (either may be null). */
export function part(mesh: UvMesh, from: FrameMethod | null, to: FrameMethod | null): MapPart {
  return { decode: from ? frameSet(mesh, from) : null, encode: to ? frameSet(mesh, to) : null };
}

/** Encodes a vector component: round((x * 0.5 + 0.5) * max). Source: METHODS.md (common practice). */
export function enc(x: number, max: number): number {
  return Math.min(max, Math.max(0, Math.round((x * 0.5 + 0.5) * max)));
}

/**
 * An RGB (or RGBA) image whose texel (x, y) holds the encoded unit vector `f(u, v)` at the
 * texel centre u = (x + 0.5) / w, v = (y + 0.5) / h (glTF v, down).
 */
export function paint(
  w: number, h: number, depth: 8 | 16, f: (u: number, v: number) => [number, number, number], alpha = false,
): PngImage {
  const ch = alpha ? 4 : 3;
  const max = depth === 16 ? 65535 : 255;
  const data = depth === 16 ? new Uint16Array(w * h * ch) : new Uint8Array(w * h * ch);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const [a, b, c] = f((x + 0.5) / w, (y + 0.5) / h);
      const l = Math.hypot(a, b, c);
      const o = (y * w + x) * ch;
      data[o] = enc(a / l, max); data[o + 1] = enc(b / l, max); data[o + 2] = enc(c / l, max);
      if (alpha) data[o + 3] = (x * 7 + y * 13) % (max + 1);
    }
  }
  return { width: w, height: h, channels: ch as 3 | 4, depth, data };
}

/** Coverage counts of a mesh's UV triangles on a w x h image. */
export function coverageOf(mesh: UvMesh, w: number, h: number): Uint32Array {
  const counts = new Uint32Array(w * h);
  countCoverage(counts, mesh.uvs, mesh.indices, mesh.indices.length / 3, w, h);
  return counts;
}

/** Largest per-channel difference (RGB) at each texel where mask[p] is non-zero; returns the histogram. */
export function compareCovered(a: PngImage, b: PngImage, mask: Uint32Array): { texels: number; maxDiff: number; within: (steps: number) => number } {
  const diffs: number[] = [];
  for (let p = 0; p < mask.length; p++) {
    if (!mask[p]) continue;
    let d = 0;
    for (let c = 0; c < 3; c++) d = Math.max(d, Math.abs(a.data[p * a.channels + c] - b.data[p * b.channels + c]));
    diffs.push(d);
  }
  return {
    texels: diffs.length,
    maxDiff: diffs.reduce((m, d) => Math.max(m, d), 0),
    within: (steps: number) => diffs.filter((d) => d <= steps).length / diffs.length,
  };
}
