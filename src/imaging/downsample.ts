/**
 * Based on: box filtering (area averaging), the textbook reduction filter for image
 * minification (Heckbert 1989, "Fundamentals of Texture Mapping and Image Warping", section
 * 3.4, box prefiltering). Each output texel is the mean of the source texels whose index
 * range maps onto it; every source texel is read once, so the cost is linear in its size.
 */
import { assert } from '../mesh/errors.js';

/**
 * The size an image of `width` x `height` shrinks to so that its longer side is at most
 * `maxSide` (aspect kept, each side at least 1). An image within the limit keeps its size.
 */
export function fitSize(width: number, height: number, maxSide: number): { width: number; height: number } {
  const long = Math.max(width, height);
  if (long <= maxSide) return { width, height };
  return { width: Math.max(1, Math.round((width * maxSide) / long)), height: Math.max(1, Math.round((height * maxSide) / long)) };
}

/**
 * Box-filters the first three channels of a `channels`-per-texel image (8- or 16-bit samples;
 * a grey image is read as grey in all three) into `out`, 8-bit RGB, outWidth x outHeight.
 * Output texel (x, y) averages source columns [floor(x * w / ow), floor((x + 1) * w / ow))
 * and the rows likewise (never empty while ow <= w and oh <= h). Returns `out`.
 * Preconditions: out.length === outWidth * outHeight * 3; 1 <= outWidth <= width;
 * 1 <= outHeight <= height; data holds width * height * channels samples.
 */
export function boxDownsampleRgb8(
  out: Uint8Array, data: Uint8Array | Uint16Array, width: number, height: number, channels: number,
  outWidth: number, outHeight: number,
): Uint8Array {
  assert(out.length === outWidth * outHeight * 3, 'out must hold 3 bytes per output texel');
  assert(outWidth >= 1 && outWidth <= width && outHeight >= 1 && outHeight <= height, 'output must be no larger than the source');
  assert(data.length === width * height * channels, 'data must hold channels samples per texel');
  const scale = data instanceof Uint16Array ? 255 / 65535 : 1;
  const grey = channels < 3;
  // Sums per output column of the current output row, then divided when the row band ends.
  const sums = new Float64Array(outWidth * 3);
  const colOf = new Uint32Array(width);
  for (let x = 0; x < width; x++) colOf[x] = Math.min(outWidth - 1, Math.floor((x * outWidth) / width));
  const colCount = new Float64Array(outWidth);
  for (let x = 0; x < width; x++) colCount[colOf[x]]++;
  let oy = 0, rowsInBand = 0;
  for (let y = 0; y < height; y++) {
    const band = Math.min(outHeight - 1, Math.floor((y * outHeight) / height));
    if (band !== oy) {
      flushRow(out, sums, colCount, oy, outWidth, rowsInBand, scale);
      oy = band;
      rowsInBand = 0;
    }
    rowsInBand++;
    const row = y * width * channels;
    for (let x = 0; x < width; x++) {
      const i = row + x * channels, o = colOf[x] * 3;
      if (grey) {
        const g = data[i];
        sums[o] += g; sums[o + 1] += g; sums[o + 2] += g;
      } else {
        sums[o] += data[i]; sums[o + 1] += data[i + 1]; sums[o + 2] += data[i + 2];
      }
    }
  }
  flushRow(out, sums, colCount, oy, outWidth, rowsInBand, scale);
  return out;
}

function flushRow(out: Uint8Array, sums: Float64Array, colCount: Float64Array, oy: number, outWidth: number, rows: number, scale: number): void {
  for (let ox = 0; ox < outWidth; ox++) {
    const k = rows * colCount[ox];
    for (let c = 0; c < 3; c++) {
      const v = Math.round((sums[ox * 3 + c] / k) * scale);
      out[(oy * outWidth + ox) * 3 + c] = v > 255 ? 255 : v;
      sums[ox * 3 + c] = 0;
    }
  }
}
