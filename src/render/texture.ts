/**
 * Based on: glTF 2.0 specification, section 3.8.4 (samplers: REPEAT, CLAMP_TO_EDGE,
 * MIRRORED_REPEAT), the KHR_texture_transform extension (uv' = T * R * S * uv), bilinear
 * filtering between the four nearest texel centres (texel i covers [i, i + 1) / size; common
 * practice), and the sRGB transfer function of IEC 61966-2-1 (base colour textures are sRGB
 * encoded, glTF 2.0, 3.9.2).
 */
import { WRAP_CLAMP, WRAP_MIRROR, type RenderImage, type RenderTextureRef } from './scene.js';

/** sRGB-encoded value in [0, 1] -> linear (IEC 61966-2-1). */
export function srgbToLinear(c: number): number {
  return c <= 0.04045 ? c / 12.92 : Math.pow((c + 0.055) / 1.055, 2.4);
}

/** Linear value in [0, 1] -> sRGB encoded (IEC 61966-2-1); clamped to [0, 1]. */
export function linearToSrgb(c: number): number {
  if (!(c > 0)) return 0;
  if (c >= 1) return 1;
  return c <= 0.0031308 ? c * 12.92 : 1.055 * Math.pow(c, 1 / 2.4) - 0.055;
}

let SRGB_LUT: Float32Array | null = null;
let SRGB8_THRESHOLDS: Float64Array | null = null;

/**
 * The 8-bit sRGB code of a linear value: the same as Math.round(linearToSrgb(c) * 255), found
 * by bisecting the linear values where the rounded code steps up (table built on first use).
 */
export function linearToSrgb8(c: number): number {
  let t = SRGB8_THRESHOLDS;
  if (!t) {
    t = SRGB8_THRESHOLDS = new Float64Array(256);
    t[0] = -Infinity;
    for (let k = 1; k < 256; k++) t[k] = srgbToLinear((k - 0.5) / 255);
  }
  if (!(c > 0)) return 0;
  let lo = 0, hi = 255;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (c >= t[mid]) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

/** 16-bit sample -> linear, through the sRGB curve (table built on first use). */
function srgbTable(): Float32Array {
  if (!SRGB_LUT) {
    SRGB_LUT = new Float32Array(65536);
    for (let i = 0; i < 65536; i++) SRGB_LUT[i] = srgbToLinear(i / 65535);
  }
  return SRGB_LUT;
}

/** Texel index for coordinate index i of a side of n texels under a wrap mode. */
function wrapIndex(i: number, n: number, mode: number): number {
  if (mode === WRAP_CLAMP) return i < 0 ? 0 : i >= n ? n - 1 : i;
  if (mode === WRAP_MIRROR) {
    const p = 2 * n;
    let k = i % p;
    if (k < 0) k += p;
    return k < n ? k : p - 1 - k;
  }
  let k = i % n;
  if (k < 0) k += n;
  return k;
}

/**
 * Samples `ref`'s image bilinearly at (u, v) (the texture transform applied first) and writes
 * R, G, B into out[0..2]: in [0, 1] as stored, or linearised through the sRGB curve with
 * `srgb`. Non-finite coordinates give 0.
 */
export function sampleTexture(out: Float64Array, img: RenderImage, ref: RenderTextureRef, u: number, v: number, srgb: boolean): void {
  const m = ref.transform;
  if (m) {
    const tu = m[0] * u + m[3] * v + m[6];
    v = m[1] * u + m[4] * v + m[7];
    u = tu;
  }
  if (u - u !== 0 || v - v !== 0) { out[0] = out[1] = out[2] = 0; return; }
  const W = img.width, H = img.height, d = img.data;
  const x = u * W - 0.5, y = v * H - 0.5;
  const fx = Math.floor(x), fy = Math.floor(y);
  const ax = x - fx, ay = y - fy;
  const xa = wrapIndex(fx, W, ref.wrapS), xb = wrapIndex(fx + 1, W, ref.wrapS);
  const ya = wrapIndex(fy, H, ref.wrapT), yb = wrapIndex(fy + 1, H, ref.wrapT);
  const o00 = (ya * W + xa) * 4, o10 = (ya * W + xb) * 4, o01 = (yb * W + xa) * 4, o11 = (yb * W + xb) * 4;
  const w00 = (1 - ax) * (1 - ay), w10 = ax * (1 - ay), w01 = (1 - ax) * ay, w11 = ax * ay;
  if (srgb) {
    const L = srgbTable();
    for (let c = 0; c < 3; c++) out[c] = w00 * L[d[o00 + c]] + w10 * L[d[o10 + c]] + w01 * L[d[o01 + c]] + w11 * L[d[o11 + c]];
  } else {
    const k = 1 / 65535;
    for (let c = 0; c < 3; c++) out[c] = (w00 * d[o00 + c] + w10 * d[o10 + c] + w01 * d[o01 + c] + w11 * d[o11 + c]) * k;
  }
}
