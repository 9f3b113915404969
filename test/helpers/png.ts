/**
 * RGBA8 test images as PNG bytes, through the independent test writer in
 * test/imaging/pngBytes.ts (not the product's encoder).
 */
import { writeRawPng } from '../imaging/pngBytes.js';

/** Encodes a width x height RGBA8 image as PNG bytes. */
export function encodePngRgba8(width: number, height: number, rgba: Uint8Array): Uint8Array {
  return writeRawPng({ width, height, colorType: 6, depth: 8, samples: rgba });
}
