/**
 * Based on: glTF 2.0 specification, section 3.6.2.2 (accessor data types): "Values of NaN,
 * +Infinity, and -Infinity MUST NOT be present."
 */
import { assert } from '../mesh/errors.js';

/**
 * Marks the vertices that hold a NaN or infinite value in one attribute: for each vertex v in
 * [0, vertexCount) whose `itemSize` floats values[v * itemSize ..] are not all finite,
 * sets marks[v] = 1 (other entries are left as they are, so several attributes can be marked
 * into the same array). Returns how many vertices of this attribute are non-finite.
 * Preconditions: marks.length >= vertexCount; values.length >= vertexCount * itemSize; itemSize >= 1.
 */
export function markNonFiniteVertices(
  marks: Uint8Array,
  values: Float32Array,
  itemSize: number,
  vertexCount: number,
): number {
  assert(marks.length >= vertexCount, 'marks must hold one entry per vertex');
  assert(itemSize >= 1 && values.length >= vertexCount * itemSize, 'values must hold itemSize floats per vertex');
  // One pass without branches first: x * 0 is +-0 for finite x and NaN for NaN and
  // +-Infinity, so the sums stay 0 exactly when every value is finite (the usual case).
  const valueCount = vertexCount * itemSize;
  let s0 = 0, s1 = 0, s2 = 0, s3 = 0, i = 0;
  for (; i + 3 < valueCount; i += 4) {
    s0 += values[i] * 0; s1 += values[i + 1] * 0; s2 += values[i + 2] * 0; s3 += values[i + 3] * 0;
  }
  for (; i < valueCount; i++) s0 += values[i] * 0;
  if (s0 + s1 + s2 + s3 === 0) return 0;
  let bad = 0;
  for (let v = 0; v < vertexCount; v++) {
    const o = v * itemSize;
    let finite = true;
    for (let k = 0; k < itemSize; k++) {
      const x = values[o + k];
      // x - x is 0 for every finite x and NaN for NaN and +-Infinity.
      if (x - x !== 0) { finite = false; break; }
    }
    if (finite) continue;
    marks[v] = 1;
    bad++;
  }
  return bad;
}

/**
 * Counts the VERTICES (not the floats) that hold at least one NaN or infinite value among
 * their position (3 floats), normal (3), texture coordinate (2) and stored tangent (4). A
 * vertex with several bad values, or bad values in several attributes, counts once. Pass null
 * for an attribute the primitive does not have. Further attributes (other TEXCOORD sets, ...)
 * can be added with markNonFiniteVertices on a caller's own marks array.
 * Returns the number of such vertices, in [0, vertexCount].
 * Preconditions: each given array holds its item size times vertexCount floats (or more).
 */
export function countInvalidVertices(
  vertexCount: number,
  positions: Float32Array,
  normals: Float32Array | null,
  uvs: Float32Array | null,
  tangents: Float32Array | null,
): number {
  return markInvalidVertices(new Uint8Array(vertexCount), vertexCount, positions, normals, uvs, tangents);
}

/**
 * As countInvalidVertices, and sets marks[v] = 1 for each such vertex (others untouched), so
 * the caller can list them. Returns the count. Preconditions: marks.length >= vertexCount and
 * as countInvalidVertices.
 */
export function markInvalidVertices(
  marks: Uint8Array,
  vertexCount: number,
  positions: Float32Array,
  normals: Float32Array | null,
  uvs: Float32Array | null,
  tangents: Float32Array | null,
): number {
  assert(marks.length >= vertexCount, 'marks must hold one entry per vertex');
  markNonFiniteVertices(marks, positions, 3, vertexCount);
  if (normals) markNonFiniteVertices(marks, normals, 3, vertexCount);
  if (uvs) markNonFiniteVertices(marks, uvs, 2, vertexCount);
  if (tangents) markNonFiniteVertices(marks, tangents, 4, vertexCount);
  let count = 0;
  for (let v = 0; v < vertexCount; v++) if (marks[v]) count++;
  return count;
}
