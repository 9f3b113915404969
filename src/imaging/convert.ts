/**
 * Based on: the decoding convention of the MikkTSpace method (Mikkelsen 2008, and the notes of
 * its reference implementation, from memory): per pixel, the vertex tangent t, normal N and
 * sign are interpolated WITHOUT renormalising, the bitangent is rebuilt as b = sign * cross(N, t)
 * and only the result is normalised, n = normalize(x t + y b + z N). Object to tangent space
 * is the exact inverse of that mapping, n_ts = normalize(M^-1 n) with M = [t b N], computed
 * from the rows cross(b, N), cross(N, t), cross(t, b) (the adjugate) and the sign of
 * det M = dot(t, cross(b, N)). For an orthonormal frame this is the transpose
 * (dot(t, n), dot(b, n), dot(N, n)) of METHODS.md; for the slightly skewed frames inside a
 * curved triangle only the exact inverse makes tangent -> object -> tangent (and a renderer
 * reading our output) come back to the same vector.
 *
 * Texel encoding (common practice, METHODS.md): c = round((x * 0.5 + 0.5) * max) with max = 255
 * (8-bit) or 65535 (16-bit); decoding x = c / max * 2 - 1. Green "up" stores +Y (glTF, OpenGL),
 * "down" stores -Y. Object space is the mesh's own model space (no node transforms).
 *
 * Coverage: texels are rasterised per triangle at their centres (see rasterize.ts). A texel
 * covered by two triangles (overlapping or mirrored UVs, or two primitives) keeps the FIRST
 * writer, in primitive order then triangle order, and is counted once in `conflicts`.
 * Padding: empty texels within `padding` texels (8-neighbour rings) of covered ones take the
 * normalised average of their already-filled neighbours, ring by ring, so the result does
 * not depend on visiting order. Texels beyond that get the neutral value of the output
 * space: (0, 0, 1) for tangent space, (0, 0, 0) for object space. Alpha is copied untouched.
 */
import { TanframeError, assert } from '../mesh/errors.js';
import { TEXEL_FRAME_MIN_DET, TEXEL_ZERO_LENGTH } from '../mesh/tolerances.js';
import type { UvTransform } from '../mesh/uvTransform.js';
import type { PngImage } from './png.js';
import { RASTER_DEGENERATE, RASTER_OK, createSpanBuffer, rasterizeTriangle, type SpanBuffer } from './rasterize.js';

/** The space a normal map is expressed in. */
export type MapSpace = 'tangent' | 'object';

/** Where a map's green channel points: 'up' stores +Y (glTF, OpenGL), 'down' stores -Y. */
export type GreenDirection = 'up' | 'down';

/** Vertex frames of one mesh part, as a frame solve produced them (own vertex numbering). */
export interface FrameSet {
  /** Two floats per vertex: the texture coordinates the map is sampled with (glTF, v down). */
  uvs: Float32Array;
  /** Three floats per vertex, unit. */
  normals: Float32Array;
  /** Four floats per vertex: unit xyz, w = +1 | -1. */
  tangents: Float32Array;
  /** Triangle list. */
  indices: Uint32Array;
}

/** One mesh part (primitive) whose UV triangles receive texels. */
export interface MapPart {
  /** Frames that decode a tangent-space input (needed when from = 'tangent'). */
  decode: FrameSet | null;
  /** Frames that encode a tangent-space output (needed when to = 'tangent'). */
  encode: FrameSet | null;
  /** The map's KHR_texture_transform, applied to the UVs before rasterising (null: none). */
  uvTransform?: UvTransform | null;
}

/** How to convert. */
export interface ConvertMapOptions {
  from: MapSpace;
  to: MapSpace;
  inGreen: GreenDirection;
  outGreen: GreenDirection;
  /** Rings of edge dilation into empty texels (0 to 250). */
  padding: number;
  /** Output bits per sample; default the input's. */
  outDepth?: 8 | 16;
}

/** What a conversion did. */
export interface ConvertMapStats {
  width: number;
  height: number;
  /** Triangles rasterised (all parts). */
  triangles: number;
  /** Texels converted (covered by a triangle). */
  covered: number;
  /** Texels covered more than once (first writer kept). */
  conflicts: number;
  /** Empty texels filled by padding. */
  padded: number;
  /** Triangles with zero UV area (cover nothing). */
  degenerateTriangles: number;
  /** Triangles skipped for non-finite or huge UVs. */
  skippedTriangles: number;
  /** Covered texels whose vector or frame had no direction and got the documented fallback. */
  fallbackTexels: number;
}

/** Largest accepted `padding`. */
export const MAX_PADDING = 250;

const STATE_EMPTY = 0;
const STATE_COVERED = 1;
const STATE_CONFLICT = 2;
/** Ring r of padding is stored as STATE_RING0 + r (r >= 1). */
const STATE_RING0 = 2;
const STATE_QUEUED = 255;

function requireColour(image: PngImage): void {
  if (image.channels < 3) {
    throw new TanframeError('unsupported-format', 'a grey image holds no normal directions: convert-map needs an RGB or RGBA PNG');
  }
}

function allocSamples(depth: 8 | 16, n: number): Uint8Array | Uint16Array {
  return depth === 16 ? new Uint16Array(n) : new Uint8Array(n);
}

/** Copies one channel from `src` to `dst`, converting 8 <-> 16 bits exactly (x 257, round / 257). */
function copyChannel(
  dst: Uint8Array | Uint16Array, dstChannels: number, dstDepth: number,
  src: Uint8Array | Uint16Array, srcChannels: number, srcDepth: number, channel: number, texels: number,
): void {
  if (dstDepth === srcDepth) {
    for (let p = 0; p < texels; p++) dst[p * dstChannels + channel] = src[p * srcChannels + channel];
  } else if (dstDepth === 16) {
    for (let p = 0; p < texels; p++) dst[p * dstChannels + channel] = src[p * srcChannels + channel] * 257;
  } else {
    for (let p = 0; p < texels; p++) dst[p * dstChannels + channel] = Math.round(src[p * srcChannels + channel] / 257);
  }
}

/**
 * Flips the green channel of a map (c' = max - c on channel 1), converting the bit depth
 * first when `outDepth` differs. Everything else, alpha included, is copied. No mesh needed;
 * flipping twice gives the original bit for bit. Returns a new image.
 */
export function flipGreen(image: PngImage, outDepth?: 8 | 16): PngImage {
  requireColour(image);
  const depth = outDepth ?? image.depth;
  const n = image.width * image.height;
  const ch = image.channels;
  const data = allocSamples(depth, n * ch);
  for (let c = 0; c < ch; c++) copyChannel(data, ch, depth, image.data, ch, image.depth, c, n);
  const max = depth === 16 ? 65535 : 255;
  for (let p = 0; p < n; p++) data[p * ch + 1] = max - data[p * ch + 1];
  return { width: image.width, height: image.height, channels: ch, depth, data };
}

/**
 * Converts a normal map between tangent and object space (and between two methods' tangent
 * frames: decode with `part.decode`, encode with `part.encode`) over the UV triangles of
 * `parts`, then pads and fills the rest as described at the top of this file. Returns the
 * new image (same width, height and channels; depth = options.outDepth or the input's) and
 * counts. `onProgress(done, total)` is called a hundred times or so over the triangles.
 * Throws TanframeError 'unsupported-format' for a grey input. Preconditions: every part has
 * the frames its direction needs (decode when from = 'tangent', encode when to = 'tangent',
 * at least one of them in any case); a part's decode and encode sets hold the same triangles
 * in the same order; padding in [0, MAX_PADDING].
 */
export function convertNormalMap(
  image: PngImage,
  parts: MapPart[],
  options: ConvertMapOptions,
  onProgress?: (done: number, total: number) => void,
): { image: PngImage; stats: ConvertMapStats } {
  requireColour(image);
  const { width, height } = image;
  const useDecode = options.from === 'tangent';
  const useEncode = options.to === 'tangent';
  assert(Number.isInteger(options.padding) && options.padding >= 0 && options.padding <= MAX_PADDING, 'padding out of range');
  let total = 0;
  for (const part of parts) {
    const geo = part.decode ?? part.encode;
    assert(geo !== null, 'a map part needs frames');
    if (useDecode) assert(part.decode !== null, 'tangent-space input needs decode frames');
    if (useEncode) assert(part.encode !== null, 'tangent-space output needs encode frames');
    if (part.decode && part.encode) assert(part.decode.indices.length === part.encode.indices.length, 'decode and encode frames disagree on triangles');
    total += geo!.indices.length / 3;
  }
  const texels = width * height;
  const inCh = image.channels, outCh = image.channels;
  const outDepth = options.outDepth ?? image.depth;
  const outMax = outDepth === 16 ? 65535 : 255;
  const out = allocSamples(outDepth, texels * outCh);
  // Neutral background for texels no triangle or padding reaches.
  const bgZ = useEncode ? outMax : Math.round(0.5 * outMax);
  const bgXY = Math.round(0.5 * outMax);
  for (let p = 0; p < texels; p++) {
    const o = p * outCh;
    out[o] = bgXY; out[o + 1] = bgXY; out[o + 2] = bgZ;
  }
  if (outCh === 4) copyChannel(out, outCh, outDepth, image.data, inCh, image.depth, 3, texels);

  const state = new Uint8Array(texels);
  const stats: ConvertMapStats = {
    width, height, triangles: total, covered: 0, conflicts: 0, padded: 0,
    degenerateTriangles: 0, skippedTriangles: 0, fallbackTexels: 0,
  };
  const spans = createSpanBuffer(Math.max(64, height * 2));
  const counters = new Float64Array(5); // covered, conflicts, degenerate, skipped, fallback
  let done = 0;
  const every = Math.max(1, Math.ceil(total / 100));
  for (const part of parts) {
    const geo = (part.decode ?? part.encode)!;
    const tri = geo.indices.length / 3;
    for (let start = 0; start < tri; start += every) {
      const end = Math.min(tri, start + every);
      convertTriangles(
        out, outCh, outMax, image.data, inCh, image.depth === 16 ? 65535 : 255, state, width, height, spans, counters,
        geo.uvs, geo.indices, part.decode, part.encode, affineOf(part.uvTransform ?? null),
        useDecode, useEncode, options.inGreen === 'down' ? -1 : 1, options.outGreen === 'down' ? -1 : 1, start, end,
      );
      done += end - start;
      if (onProgress) onProgress(done, total);
    }
  }
  stats.covered = counters[0];
  stats.conflicts = counters[1];
  stats.degenerateTriangles = counters[2];
  stats.skippedTriangles = counters[3];
  stats.fallbackTexels = counters[4];
  stats.padded = padRings(out, outCh, outMax, state, width, height, options.padding);
  return { image: { width, height, channels: outCh as 3 | 4, depth: outDepth, data: out }, stats };
}

/**
 * KHR_texture_transform as an affine map [a, b, c, d, e, f]: u' = a u + b v + c,
 * v' = d u + e v + f (see src/mesh/uvTransform.ts for the source and the formula).
 */
function affineOf(t: UvTransform | null): number[] | null {
  if (!t) return null;
  const c = Math.cos(t.rotation), s = Math.sin(t.rotation);
  return [c * t.scale[0], s * t.scale[1], t.offset[0], -s * t.scale[0], c * t.scale[1], t.offset[1]];
}

/**
 * The hot loop: rasterises triangles [start, end) of one part and converts each newly covered
 * texel. Everything is passed in so the loop works on locals only.
 */
function convertTriangles(
  out: Uint8Array | Uint16Array, outCh: number, outMax: number,
  inp: Uint8Array | Uint16Array, inCh: number, inMax: number,
  state: Uint8Array, width: number, height: number, spans: SpanBuffer, counters: Float64Array,
  uvs: Float32Array, indices: Uint32Array, dec: FrameSet | null, enc: FrameSet | null, xf: number[] | null,
  useDecode: boolean, useEncode: boolean, gIn: number, gOut: number, start: number, end: number,
): void {
  const inScale = 2 / inMax;
  const outHalf = 0.5 * outMax;
  let covered = 0, conflicts = 0, degenerate = 0, skipped = 0, fallback = 0;
  const dIdx = dec ? dec.indices : indices, dN = dec ? dec.normals : null, dT = dec ? dec.tangents : null;
  const eIdx = enc ? enc.indices : indices, eN = enc ? enc.normals : null, eT = enc ? enc.tangents : null;
  const hasXf = xf !== null;
  const xa = hasXf ? xf![0] : 1, xb = hasXf ? xf![1] : 0, xc = hasXf ? xf![2] : 0;
  const xd = hasXf ? xf![3] : 0, xe = hasXf ? xf![4] : 1, xff = hasXf ? xf![5] : 0;
  // Per-corner frame values of the current triangle (scalars, refreshed per triangle).
  let dt0x = 0, dt0y = 0, dt0z = 0, ds0 = 0, dn0x = 0, dn0y = 0, dn0z = 0;
  let dt1x = 0, dt1y = 0, dt1z = 0, ds1 = 0, dn1x = 0, dn1y = 0, dn1z = 0;
  let dt2x = 0, dt2y = 0, dt2z = 0, ds2 = 0, dn2x = 0, dn2y = 0, dn2z = 0;
  let et0x = 0, et0y = 0, et0z = 0, es0 = 0, en0x = 0, en0y = 0, en0z = 0;
  let et1x = 0, et1y = 0, et1z = 0, es1 = 0, en1x = 0, en1y = 0, en1z = 0;
  let et2x = 0, et2y = 0, et2z = 0, es2 = 0, en2x = 0, en2y = 0, en2z = 0;
  for (let t = start; t < end; t++) {
    const i0 = indices[t * 3] * 2, i1 = indices[t * 3 + 1] * 2, i2 = indices[t * 3 + 2] * 2;
    let u0 = uvs[i0], v0 = uvs[i0 + 1], u1 = uvs[i1], v1 = uvs[i1 + 1], u2 = uvs[i2], v2 = uvs[i2 + 1];
    if (hasXf) {
      let a = u0, b = v0; u0 = xa * a + xb * b + xc; v0 = xd * a + xe * b + xff;
      a = u1; b = v1; u1 = xa * a + xb * b + xc; v1 = xd * a + xe * b + xff;
      a = u2; b = v2; u2 = xa * a + xb * b + xc; v2 = xd * a + xe * b + xff;
    }
    const r = rasterizeTriangle(spans, u0, v0, u1, v1, u2, v2, width, height);
    if (r !== RASTER_OK) {
      if (r === RASTER_DEGENERATE) degenerate++;
      else skipped++;
      continue;
    }
    if (spans.count === 0) continue;
    if (dN !== null && dT !== null) {
      let k = dIdx[t * 3];
      dt0x = dT[k * 4]; dt0y = dT[k * 4 + 1]; dt0z = dT[k * 4 + 2]; ds0 = dT[k * 4 + 3];
      dn0x = dN[k * 3]; dn0y = dN[k * 3 + 1]; dn0z = dN[k * 3 + 2];
      k = dIdx[t * 3 + 1];
      dt1x = dT[k * 4]; dt1y = dT[k * 4 + 1]; dt1z = dT[k * 4 + 2]; ds1 = dT[k * 4 + 3];
      dn1x = dN[k * 3]; dn1y = dN[k * 3 + 1]; dn1z = dN[k * 3 + 2];
      k = dIdx[t * 3 + 2];
      dt2x = dT[k * 4]; dt2y = dT[k * 4 + 1]; dt2z = dT[k * 4 + 2]; ds2 = dT[k * 4 + 3];
      dn2x = dN[k * 3]; dn2y = dN[k * 3 + 1]; dn2z = dN[k * 3 + 2];
    }
    if (eN !== null && eT !== null) {
      let k = eIdx[t * 3];
      et0x = eT[k * 4]; et0y = eT[k * 4 + 1]; et0z = eT[k * 4 + 2]; es0 = eT[k * 4 + 3];
      en0x = eN[k * 3]; en0y = eN[k * 3 + 1]; en0z = eN[k * 3 + 2];
      k = eIdx[t * 3 + 1];
      et1x = eT[k * 4]; et1y = eT[k * 4 + 1]; et1z = eT[k * 4 + 2]; es1 = eT[k * 4 + 3];
      en1x = eN[k * 3]; en1y = eN[k * 3 + 1]; en1z = eN[k * 3 + 2];
      k = eIdx[t * 3 + 2];
      et2x = eT[k * 4]; et2y = eT[k * 4 + 1]; et2z = eT[k * 4 + 2]; es2 = eT[k * 4 + 3];
      en2x = eN[k * 3]; en2y = eN[k * 3 + 1]; en2z = eN[k * 3 + 2];
    }
    const dw0 = spans.dw[0], dw1 = spans.dw[1], dw2 = spans.dw[2];
    for (let s = 0; s < spans.count; s++) {
      const row = spans.y[s] * width;
      const x0 = spans.x0[s], x1 = spans.x1[s];
      const w0s = spans.w[s * 3], w1s = spans.w[s * 3 + 1], w2s = spans.w[s * 3 + 2];
      for (let x = x0; x < x1; x++) {
        const p = row + x;
        const st = state[p];
        if (st !== STATE_EMPTY) {
          if (st === STATE_COVERED) { state[p] = STATE_CONFLICT; conflicts++; }
          continue;
        }
        state[p] = STATE_COVERED;
        covered++;
        const kx = x - x0;
        const b0 = w0s + kx * dw0, b1 = w1s + kx * dw1, b2 = w2s + kx * dw2;
        const ip = p * inCh;
        let vx = inp[ip] * inScale - 1, vy = (inp[ip + 1] * inScale - 1) * gIn, vz = inp[ip + 2] * inScale - 1;
        // Fallback direction for a vector without one: the interpolated normal (object output)
        // or (0, 0, 1) (tangent output).
        let fx = 0, fy = 0, fz = 1;
        if (useDecode) {
          const tx = b0 * dt0x + b1 * dt1x + b2 * dt2x, ty = b0 * dt0y + b1 * dt1y + b2 * dt2y, tz = b0 * dt0z + b1 * dt1z + b2 * dt2z;
          const nx = b0 * dn0x + b1 * dn1x + b2 * dn2x, ny = b0 * dn0y + b1 * dn1y + b2 * dn2y, nz = b0 * dn0z + b1 * dn1z + b2 * dn2z;
          const sg = b0 * ds0 + b1 * ds1 + b2 * ds2;
          const bx = sg * (ny * tz - nz * ty), by = sg * (nz * tx - nx * tz), bz = sg * (nx * ty - ny * tx);
          const ox = vx * tx + vy * bx + vz * nx, oy = vx * ty + vy * by + vz * ny, oz = vx * tz + vy * bz + vz * nz;
          vx = ox; vy = oy; vz = oz;
          if (!useEncode) { fx = nx; fy = ny; fz = nz; }
        }
        if (useEncode) {
          const tx = b0 * et0x + b1 * et1x + b2 * et2x, ty = b0 * et0y + b1 * et1y + b2 * et2y, tz = b0 * et0z + b1 * et1z + b2 * et2z;
          const nx = b0 * en0x + b1 * en1x + b2 * en2x, ny = b0 * en0y + b1 * en1y + b2 * en2y, nz = b0 * en0z + b1 * en1z + b2 * en2z;
          const sg = b0 * es0 + b1 * es1 + b2 * es2;
          const bx = sg * (ny * tz - nz * ty), by = sg * (nz * tx - nx * tz), bz = sg * (nx * ty - ny * tx);
          // Rows of the adjugate of M = [t b N]: M^-1 = rows / det.
          const r0x = by * nz - bz * ny, r0y = bz * nx - bx * nz, r0z = bx * ny - by * nx; // cross(b, N)
          const r1x = ny * tz - nz * ty, r1y = nz * tx - nx * tz, r1z = nx * ty - ny * tx; // cross(N, t)
          const r2x = ty * bz - tz * by, r2y = tz * bx - tx * bz, r2z = tx * by - ty * bx; // cross(t, b)
          const det = tx * r0x + ty * r0y + tz * r0z;
          let ox: number, oy: number, oz: number;
          if (det > TEXEL_FRAME_MIN_DET || det < -TEXEL_FRAME_MIN_DET) {
            const sd = det > 0 ? 1 : -1;
            ox = sd * (r0x * vx + r0y * vy + r0z * vz);
            oy = sd * (r1x * vx + r1y * vy + r1z * vz);
            oz = sd * (r2x * vx + r2y * vy + r2z * vz);
          } else {
            // No inverse (handedness passing through zero): the transpose, counted.
            ox = tx * vx + ty * vy + tz * vz;
            oy = bx * vx + by * vy + bz * vz;
            oz = nx * vx + ny * vy + nz * vz;
            fallback++;
          }
          vx = ox; vy = oy; vz = oz;
          fx = 0; fy = 0; fz = 1;
        }
        let len = Math.sqrt(vx * vx + vy * vy + vz * vz);
        if (!(len > TEXEL_ZERO_LENGTH)) {
          vx = fx; vy = fy; vz = fz;
          len = Math.sqrt(vx * vx + vy * vy + vz * vz);
          if (!(len > TEXEL_ZERO_LENGTH)) { vx = 0; vy = 0; vz = 1; len = 1; }
          fallback++;
        }
        const inv = outHalf / len;
        const o = p * outCh;
        // round((x * 0.5 + 0.5) * max): x * max/2 + max/2 + 0.5, truncated (non-negative).
        out[o] = (vx * inv + outHalf + 0.5) | 0;
        out[o + 1] = (vy * gOut * inv + outHalf + 0.5) | 0;
        out[o + 2] = (vz * inv + outHalf + 0.5) | 0;
      }
    }
  }
  counters[0] += covered;
  counters[1] += conflicts;
  counters[2] += degenerate;
  counters[3] += skipped;
  counters[4] += fallback;
}

/**
 * Edge dilation: `rings` rounds; in round r every empty texel with a filled 8-neighbour
 * (covered, or filled in an earlier round) takes the normalised average of those neighbours.
 * Returns the number of texels filled.
 */
function padRings(
  out: Uint8Array | Uint16Array, ch: number, max: number, state: Uint8Array, width: number, height: number, rings: number,
): number {
  if (rings === 0) return 0;
  const scale = 2 / max, half = 0.5 * max;
  let frontier = new Int32Array(1024);
  let count = 0;
  // Round 1: empty texels next to covered ones.
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const p = y * width + x;
      if (state[p] !== STATE_EMPTY) continue;
      let near = false;
      for (let dy = -1; dy <= 1 && !near; dy++) {
        const yy = y + dy;
        if (yy < 0 || yy >= height) continue;
        for (let dx = -1; dx <= 1; dx++) {
          const xx = x + dx;
          if (xx < 0 || xx >= width) continue;
          const s = state[yy * width + xx];
          if (s === STATE_COVERED || s === STATE_CONFLICT) { near = true; break; }
        }
      }
      if (!near) continue;
      if (count === frontier.length) { const g = new Int32Array(count * 2); g.set(frontier); frontier = g; }
      frontier[count++] = p;
      state[p] = STATE_QUEUED;
    }
  }
  let filled = 0;
  let next = new Int32Array(Math.max(1024, count));
  for (let r = 1; r <= rings && count > 0; r++) {
    const ringState = STATE_RING0 + r;
    // Fill this ring from neighbours filled before it (state in [1, ringState)).
    for (let i = 0; i < count; i++) {
      const p = frontier[i];
      const y = (p / width) | 0, x = p - y * width;
      let sx = 0, sy = 0, sz = 0, first = -1;
      for (let dy = -1; dy <= 1; dy++) {
        const yy = y + dy;
        if (yy < 0 || yy >= height) continue;
        for (let dx = -1; dx <= 1; dx++) {
          const xx = x + dx;
          if (xx < 0 || xx >= width || (dx === 0 && dy === 0)) continue;
          const q = yy * width + xx;
          const s = state[q];
          if (s === STATE_EMPTY || s >= ringState) continue;
          const o = q * ch;
          if (first < 0) first = o;
          sx += out[o] * scale - 1; sy += out[o + 1] * scale - 1; sz += out[o + 2] * scale - 1;
        }
      }
      const o = p * ch;
      const len = Math.sqrt(sx * sx + sy * sy + sz * sz);
      if (len > TEXEL_ZERO_LENGTH) {
        const inv = half / len;
        out[o] = (sx * inv + half + 0.5) | 0;
        out[o + 1] = (sy * inv + half + 0.5) | 0;
        out[o + 2] = (sz * inv + half + 0.5) | 0;
      } else if (first >= 0) {
        out[o] = out[first]; out[o + 1] = out[first + 1]; out[o + 2] = out[first + 2];
      }
      state[p] = ringState;
      filled++;
    }
    if (r === rings) break;
    // The next ring: empty 8-neighbours of this one.
    let nextCount = 0;
    for (let i = 0; i < count; i++) {
      const p = frontier[i];
      const y = (p / width) | 0, x = p - y * width;
      for (let dy = -1; dy <= 1; dy++) {
        const yy = y + dy;
        if (yy < 0 || yy >= height) continue;
        for (let dx = -1; dx <= 1; dx++) {
          const xx = x + dx;
          if (xx < 0 || xx >= width) continue;
          const q = yy * width + xx;
          if (state[q] !== STATE_EMPTY) continue;
          state[q] = STATE_QUEUED;
          if (nextCount === next.length) { const g = new Int32Array(nextCount * 2); g.set(next); next = g; }
          next[nextCount++] = q;
        }
      }
    }
    const swap = frontier; frontier = next; next = swap;
    count = nextCount;
  }
  // Texels queued for a ring that was never filled go back to empty.
  for (let i = 0; i < count; i++) if (state[frontier[i]] === STATE_QUEUED) state[frontier[i]] = STATE_EMPTY;
  return filled;
}
