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
import { uvTransformMatrix, type UvTransform } from '../mesh/uvTransform.js';
import type { PngImage } from './png.js';
import { MAX_PADDING } from './limits.js';
import { RASTER_DEGENERATE, RASTER_OK, createSpanBuffer, rasterWork, rasterizeTriangle, type SpanBuffer } from './rasterize.js';

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

/**
 * Texel budget of a conversion: the rasteriser may do at most RASTER_WORK_PER_TEXEL texel
 * steps per texel of the map plus RASTER_WORK_PER_TRIANGLE per triangle (rasterWork), so its
 * time is linear in the map and the mesh. An atlas covers each texel about once (mirrored or
 * stacked parts a few times); UVs that wrap over many tiles cover the map over and over and are
 * refused with 'too-large' before anything is rasterised. Our choices.
 */
export const RASTER_WORK_PER_TEXEL = 16;
/** Texel steps every triangle may take on top of RASTER_WORK_PER_TEXEL (a few rows of a thin sliver). */
export const RASTER_WORK_PER_TRIANGLE = 64;

export { MAX_PADDING };

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
 * Throws TanframeError 'unsupported-format' for a grey input and 'too-large' beyond the texel
 * budget (RASTER_WORK_PER_TEXEL, checked before rasterising). Preconditions: every part has
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
  checkRasterBudget(parts, width, height, total);
  const inCh = image.channels, outCh = image.channels;
  const outDepth = options.outDepth ?? image.depth;
  const outMax = outDepth === 16 ? 65535 : 255;
  const out = allocSamples(outDepth, texels * outCh);
  // Neutral background for texels no triangle or padding reaches: one texel written, then
  // copied over the rest in doubling blocks.
  const bgXY = Math.round(0.5 * outMax);
  out[0] = bgXY; out[1] = bgXY; out[2] = useEncode ? outMax : bgXY;
  for (let filled = outCh, all = texels * outCh; filled < all; filled *= 2) out.copyWithin(filled, 0, Math.min(filled, all - filled));
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
 * Refuses with 'too-large', before any texel is touched, a conversion whose triangles would
 * take more rasteriser work than the texel budget (RASTER_WORK_PER_TEXEL per texel plus
 * RASTER_WORK_PER_TRIANGLE per triangle). Stops summing as soon as the budget is exceeded.
 */
function checkRasterBudget(parts: MapPart[], width: number, height: number, triangles: number): void {
  const budget = RASTER_WORK_PER_TEXEL * width * height + RASTER_WORK_PER_TRIANGLE * triangles;
  let work = 0;
  for (const part of parts) {
    const geo = (part.decode ?? part.encode)!;
    const xf = affineOf(part.uvTransform ?? null);
    const uvs = geo.uvs, indices = geo.indices, tri = indices.length / 3;
    const xa = xf ? xf[0] : 1, xb = xf ? xf[1] : 0, xc = xf ? xf[2] : 0, xd = xf ? xf[3] : 0, xe = xf ? xf[4] : 1, xff = xf ? xf[5] : 0;
    for (let t = 0; t < tri; t++) {
      const i0 = indices[t * 3] * 2, i1 = indices[t * 3 + 1] * 2, i2 = indices[t * 3 + 2] * 2;
      const a0 = uvs[i0], b0 = uvs[i0 + 1], a1 = uvs[i1], b1 = uvs[i1 + 1], a2 = uvs[i2], b2 = uvs[i2 + 1];
      work += rasterWork(
        xa * a0 + xb * b0 + xc, xd * a0 + xe * b0 + xff, xa * a1 + xb * b1 + xc, xd * a1 + xe * b1 + xff,
        xa * a2 + xb * b2 + xc, xd * a2 + xe * b2 + xff, width, height,
      );
      if (work > budget) {
        throw new TanframeError('too-large',
          `the UV triangles would take more than ${RASTER_WORK_PER_TEXEL} texel steps per texel of the ${width} x ${height} map ` +
          `(UVs wrapping over many tiles?); at most ${budget} are allowed`);
      }
    }
  }
}

/**
 * KHR_texture_transform as an affine map [a, b, c, d, e, f]: u' = a u + b v + c,
 * v' = d u + e v + f (see src/mesh/uvTransform.ts for the source and the formula).
 */
function affineOf(t: UvTransform | null): number[] | null {
  if (!t) return null;
  const m = uvTransformMatrix(t);
  return [m[0], m[3], m[6], m[1], m[4], m[7]];
}

/**
 * The hot loop: rasterises triangles [start, end) of one part and converts each newly covered
 * texel. Everything is passed in so the loop works on locals only. Along a span the
 * interpolated t, N and sign are linear in x, so each is its value at the span's first texel
 * plus k times its per-texel increment (the same numbers as weighting the corners per texel).
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
  // Corner values of the current triangle, then per-texel increments along x.
  const dc = new Float64Array(21), ec = new Float64Array(21);
  const dd = new Float64Array(7), ed = new Float64Array(7);
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
    const dw0 = spans.dw[0], dw1 = spans.dw[1], dw2 = spans.dw[2];
    // Seven values per corner: tx ty tz sign nx ny nz (corner c at c * 7).
    if (dN !== null && dT !== null) {
      for (let c = 0; c < 3; c++) {
        const k = dIdx[t * 3 + c];
        dc[c * 7] = dT[k * 4]; dc[c * 7 + 1] = dT[k * 4 + 1]; dc[c * 7 + 2] = dT[k * 4 + 2]; dc[c * 7 + 3] = dT[k * 4 + 3];
        dc[c * 7 + 4] = dN[k * 3]; dc[c * 7 + 5] = dN[k * 3 + 1]; dc[c * 7 + 6] = dN[k * 3 + 2];
      }
      for (let j = 0; j < 7; j++) dd[j] = dw0 * dc[j] + dw1 * dc[7 + j] + dw2 * dc[14 + j];
    }
    if (eN !== null && eT !== null) {
      for (let c = 0; c < 3; c++) {
        const k = eIdx[t * 3 + c];
        ec[c * 7] = eT[k * 4]; ec[c * 7 + 1] = eT[k * 4 + 1]; ec[c * 7 + 2] = eT[k * 4 + 2]; ec[c * 7 + 3] = eT[k * 4 + 3];
        ec[c * 7 + 4] = eN[k * 3]; ec[c * 7 + 5] = eN[k * 3 + 1]; ec[c * 7 + 6] = eN[k * 3 + 2];
      }
      for (let j = 0; j < 7; j++) ed[j] = dw0 * ec[j] + dw1 * ec[7 + j] + dw2 * ec[14 + j];
    }
    const dtxd = dd[0], dtyd = dd[1], dtzd = dd[2], dsd = dd[3], dnxd = dd[4], dnyd = dd[5], dnzd = dd[6];
    const etxd = ed[0], etyd = ed[1], etzd = ed[2], esd = ed[3], enxd = ed[4], enyd = ed[5], enzd = ed[6];
    for (let s = 0; s < spans.count; s++) {
      const row = spans.y[s] * width;
      const x0 = spans.x0[s], x1 = spans.x1[s];
      const w0 = spans.w[s * 3], w1 = spans.w[s * 3 + 1], w2 = spans.w[s * 3 + 2];
      // Interpolated values at the span's first texel.
      let dtx0 = 0, dty0 = 0, dtz0 = 0, ds0 = 0, dnx0 = 0, dny0 = 0, dnz0 = 0;
      let etx0 = 0, ety0 = 0, etz0 = 0, es0 = 0, enx0 = 0, eny0 = 0, enz0 = 0;
      if (useDecode) {
        dtx0 = w0 * dc[0] + w1 * dc[7] + w2 * dc[14]; dty0 = w0 * dc[1] + w1 * dc[8] + w2 * dc[15];
        dtz0 = w0 * dc[2] + w1 * dc[9] + w2 * dc[16]; ds0 = w0 * dc[3] + w1 * dc[10] + w2 * dc[17];
        dnx0 = w0 * dc[4] + w1 * dc[11] + w2 * dc[18]; dny0 = w0 * dc[5] + w1 * dc[12] + w2 * dc[19];
        dnz0 = w0 * dc[6] + w1 * dc[13] + w2 * dc[20];
      }
      if (useEncode) {
        etx0 = w0 * ec[0] + w1 * ec[7] + w2 * ec[14]; ety0 = w0 * ec[1] + w1 * ec[8] + w2 * ec[15];
        etz0 = w0 * ec[2] + w1 * ec[9] + w2 * ec[16]; es0 = w0 * ec[3] + w1 * ec[10] + w2 * ec[17];
        enx0 = w0 * ec[4] + w1 * ec[11] + w2 * ec[18]; eny0 = w0 * ec[5] + w1 * ec[12] + w2 * ec[19];
        enz0 = w0 * ec[6] + w1 * ec[13] + w2 * ec[20];
      }
      if (useDecode && !useEncode) {
        // Tangent -> object, the common case, on its own: fewer live values in the loop.
        for (let x = x0; x < x1; x++) {
          const p = row + x;
          const st = state[p];
          if (st !== STATE_EMPTY) {
            if (st === STATE_COVERED) { state[p] = STATE_CONFLICT; conflicts++; }
            continue;
          }
          state[p] = STATE_COVERED;
          covered++;
          const k = x - x0;
          const ip = p * inCh;
          const vx = inp[ip] * inScale - 1, vy = (inp[ip + 1] * inScale - 1) * gIn, vz = inp[ip + 2] * inScale - 1;
          const tx = dtx0 + k * dtxd, ty = dty0 + k * dtyd, tz = dtz0 + k * dtzd, sg = ds0 + k * dsd;
          const nx = dnx0 + k * dnxd, ny = dny0 + k * dnyd, nz = dnz0 + k * dnzd;
          const bx = sg * (ny * tz - nz * ty), by = sg * (nz * tx - nx * tz), bz = sg * (nx * ty - ny * tx);
          let ox = vx * tx + vy * bx + vz * nx, oy = vx * ty + vy * by + vz * ny, oz = vx * tz + vy * bz + vz * nz;
          let len2 = ox * ox + oy * oy + oz * oz;
          if (!(len2 > TEXEL_ZERO_LENGTH * TEXEL_ZERO_LENGTH)) {
            ox = nx; oy = ny; oz = nz;
            len2 = ox * ox + oy * oy + oz * oz;
            if (!(len2 > TEXEL_ZERO_LENGTH * TEXEL_ZERO_LENGTH)) { ox = 0; oy = 0; oz = 1; len2 = 1; }
            fallback++;
          }
          const inv = outHalf / Math.sqrt(len2);
          const o = p * outCh;
          out[o] = (ox * inv + outHalf + 0.5) | 0;
          out[o + 1] = (oy * gOut * inv + outHalf + 0.5) | 0;
          out[o + 2] = (oz * inv + outHalf + 0.5) | 0;
        }
        continue;
      }
      for (let x = x0; x < x1; x++) {
        const p = row + x;
        const st = state[p];
        if (st !== STATE_EMPTY) {
          if (st === STATE_COVERED) { state[p] = STATE_CONFLICT; conflicts++; }
          continue;
        }
        state[p] = STATE_COVERED;
        covered++;
        const k = x - x0;
        const ip = p * inCh;
        let vx = inp[ip] * inScale - 1, vy = (inp[ip + 1] * inScale - 1) * gIn, vz = inp[ip + 2] * inScale - 1;
        // Fallback direction for a vector without one: the interpolated normal (object output)
        // or (0, 0, 1) (tangent output).
        let fx = 0, fy = 0, fz = 1;
        if (useDecode) {
          const tx = dtx0 + k * dtxd, ty = dty0 + k * dtyd, tz = dtz0 + k * dtzd, sg = ds0 + k * dsd;
          const nx = dnx0 + k * dnxd, ny = dny0 + k * dnyd, nz = dnz0 + k * dnzd;
          const bx = sg * (ny * tz - nz * ty), by = sg * (nz * tx - nx * tz), bz = sg * (nx * ty - ny * tx);
          const ox = vx * tx + vy * bx + vz * nx, oy = vx * ty + vy * by + vz * ny, oz = vx * tz + vy * bz + vz * nz;
          vx = ox; vy = oy; vz = oz;
          fx = nx; fy = ny; fz = nz;
        }
        if (useEncode) {
          const tx = etx0 + k * etxd, ty = ety0 + k * etyd, tz = etz0 + k * etzd, sg = es0 + k * esd;
          const nx = enx0 + k * enxd, ny = eny0 + k * enyd, nz = enz0 + k * enzd;
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
        let len2 = vx * vx + vy * vy + vz * vz;
        if (!(len2 > TEXEL_ZERO_LENGTH * TEXEL_ZERO_LENGTH)) {
          vx = fx; vy = fy; vz = fz;
          len2 = vx * vx + vy * vy + vz * vz;
          if (!(len2 > TEXEL_ZERO_LENGTH * TEXEL_ZERO_LENGTH)) { vx = 0; vy = 0; vz = 1; len2 = 1; }
          fallback++;
        }
        const inv = outHalf / Math.sqrt(len2);
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

/** Writes row[x] = 1 when texel x - 1, x or x + 1 of row y is not empty (0 outside the image). */
function nearRow(row: Uint8Array, state: Uint8Array, y: number, width: number, height: number): void {
  if (y < 0 || y >= height) { row.fill(0); return; }
  const base = y * width;
  let left = 0, mid = state[base] !== STATE_EMPTY ? 1 : 0;
  for (let x = 0; x < width; x++) {
    const right = x + 1 < width && state[base + x + 1] !== STATE_EMPTY ? 1 : 0;
    row[x] = left | mid | right;
    left = mid; mid = right;
  }
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
  // Round 1: empty texels with a covered 8-neighbour. `near` rows hold "a covered texel at
  // x - 1, x or x + 1" for rows y - 1, y and y + 1, so each texel is read a fixed few times.
  let above = new Uint8Array(width), here = new Uint8Array(width), below = new Uint8Array(width);
  nearRow(above, state, -1, width, height);
  nearRow(here, state, 0, width, height);
  for (let y = 0; y < height; y++) {
    nearRow(below, state, y + 1, width, height);
    const base = y * width;
    for (let x = 0; x < width; x++) {
      const p = base + x;
      if (state[p] !== STATE_EMPTY || (above[x] | here[x] | below[x]) === 0) continue;
      if (count === frontier.length) { const g = new Int32Array(count * 2); g.set(frontier); frontier = g; }
      frontier[count++] = p;
    }
    const t = above; above = here; here = below; below = t;
  }
  for (let i = 0; i < count; i++) state[frontier[i]] = STATE_QUEUED;
  let filled = 0;
  let next = new Int32Array(Math.max(1024, count));
  for (let r = 1; r <= rings && count > 0; r++) {
    const ringState = STATE_RING0 + r;
    const more = r < rings;
    let nextCount = 0;
    // Fill this ring from neighbours filled before it (state in [1, ringState)) and queue its
    // empty neighbours for the next ring, in one pass over each 3 x 3 neighbourhood. Queued
    // texels (this ring's and the next's) are never read as neighbours.
    for (let i = 0; i < count; i++) {
      const p = frontier[i];
      const y = (p / width) | 0, x = p - y * width;
      const y0 = y > 0 ? y - 1 : 0, y1 = y < height - 1 ? y + 1 : y;
      const xa = x > 0 ? x - 1 : 0, xb = x < width - 1 ? x + 1 : x;
      let sx = 0, sy = 0, sz = 0, n = 0, first = -1;
      for (let yy = y0; yy <= y1; yy++) {
        for (let q = yy * width + xa, qEnd = yy * width + xb; q <= qEnd; q++) {
          const s = state[q];
          if (s === STATE_EMPTY) {
            if (more) {
              state[q] = STATE_QUEUED;
              if (nextCount === next.length) { const g = new Int32Array(nextCount * 2); g.set(next); next = g; }
              next[nextCount++] = q;
            }
            continue;
          }
          if (s >= ringState) continue; // queued texels, p itself included
          const o = q * ch;
          if (first < 0) first = o;
          sx += out[o]; sy += out[o + 1]; sz += out[o + 2]; n++;
        }
      }
      // Mean of the decoded neighbours: sum(c * scale - 1) = scale * sum(c) - n.
      const vx = sx * scale - n, vy = sy * scale - n, vz = sz * scale - n;
      const o = p * ch;
      const len = Math.sqrt(vx * vx + vy * vy + vz * vz);
      if (len > TEXEL_ZERO_LENGTH) {
        const inv = half / len;
        out[o] = (vx * inv + half + 0.5) | 0;
        out[o + 1] = (vy * inv + half + 0.5) | 0;
        out[o + 2] = (vz * inv + half + 0.5) | 0;
      } else if (first >= 0) {
        out[o] = out[first]; out[o + 1] = out[first + 1]; out[o + 2] = out[first + 2];
      }
      state[p] = ringState;
      filled++;
    }
    const swap = frontier; frontier = next; next = swap;
    count = nextCount;
  }
  return filled;
}
