/**
 * Based on: glTF 2.0 specification, section 3.7.2.1 (primitive modes): the vertex order of
 * TRIANGLE_STRIP and TRIANGLE_FAN primitives.
 */
import { MODE_TRIANGLES, MODE_TRIANGLE_FAN, MODE_TRIANGLE_STRIP } from './asset.js';
import { assert } from './errors.js';

/** True when `mode` is one of the three triangle modes. */
export function isTriangleMode(mode: number): boolean {
  return mode === MODE_TRIANGLES || mode === MODE_TRIANGLE_STRIP || mode === MODE_TRIANGLE_FAN;
}

/** Number of triangles a primitive of `mode` with `count` indices (or vertices) holds. */
export function triangleCount(mode: number, count: number): number {
  if (mode === MODE_TRIANGLES) return Math.floor(count / 3);
  if (mode === MODE_TRIANGLE_STRIP || mode === MODE_TRIANGLE_FAN) return count >= 3 ? count - 2 : 0;
  return 0;
}

/**
 * Expands a triangle list, strip or fan into a triangle list.
 * `indices` are the stored indices, or null for a non-indexed primitive of `vertexCount`
 * vertices. Returns a new Uint32Array of 3 * triangleCount entries, triangle i of the list
 * being triangle i of the primitive in the specification's order (strip: {i, i+1+i%2,
 * i+2-i%2}; fan: {i+1, i+2, 0}). A trailing partial triangle of a list is dropped.
 * Precondition: `mode` is a triangle mode.
 */
export function expandToTriangleList(mode: number, indices: Uint32Array | null, vertexCount: number): Uint32Array {
  assert(isTriangleMode(mode), `mode ${mode} is not a triangle mode`);
  const n = indices ? indices.length : vertexCount;
  const tris = triangleCount(mode, n);
  const out = new Uint32Array(tris * 3);
  for (let t = 0; t < tris; t++) {
    let a: number, b: number, c: number;
    if (mode === MODE_TRIANGLES) {
      a = t * 3; b = t * 3 + 1; c = t * 3 + 2;
    } else if (mode === MODE_TRIANGLE_STRIP) {
      const odd = t & 1;
      a = t; b = t + 1 + odd; c = t + 2 - odd;
    } else {
      a = t + 1; b = t + 2; c = 0;
    }
    out[t * 3] = indices ? indices[a] : a;
    out[t * 3 + 1] = indices ? indices[b] : b;
    out[t * 3 + 2] = indices ? indices[c] : c;
  }
  return out;
}
