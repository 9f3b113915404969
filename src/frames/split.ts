/**
 * Based on: the usual vertex-splitting rule of tangent generation (a vertex is duplicated
 * only where the frames of its corners differ). Frames compare bit for bit after rounding to
 * float32, so the output is a pure function of the input.
 */
import { writeFallbackTangent } from './fallback.js';

const NONE = 0xffffffff;

/** Output of `splitByCornerFrames`. */
export interface SplitResult {
  tangents: Float32Array;
  indices: Uint32Array;
  sourceVertex: Uint32Array;
  /** Vertices not used by any triangle (they keep the fallback frame). */
  unusedVertices: number;
}

/**
 * Re-indexes a triangle list so that each output vertex carries one frame.
 * For input vertex v, the first distinct frame among its corners (in corner order) keeps
 * index v; every further distinct frame becomes a new vertex appended after the input
 * vertices, in order of first appearance. Vertices no triangle uses keep their index and get
 * the fallback frame from their normal. `cornerTangents` holds 4 floats per corner.
 * Returns tangents (4 per output vertex), the new indices and, per output vertex, its source.
 * Preconditions: indices.length * 4 === cornerTangents.length; indices < vertexCount.
 */
export function splitByCornerFrames(
  cornerTangents: Float32Array,
  indices: Uint32Array,
  normals: Float32Array,
  vertexCount: number,
): SplitResult {
  const cornerCount = indices.length;
  const bits = new Uint32Array(cornerTangents.buffer, cornerTangents.byteOffset, cornerCount * 4);
  // Worst case: every corner its own vertex, plus the unused input vertices.
  const capacity = vertexCount + cornerCount;
  const outBits = new Uint32Array(capacity * 4);
  const next = new Uint32Array(capacity).fill(NONE); // next variant of the same source
  const used = new Uint8Array(vertexCount);
  const source = new Uint32Array(capacity);
  const outIndices = new Uint32Array(cornerCount);
  let count = vertexCount;
  for (let v = 0; v < vertexCount; v++) source[v] = v;
  for (let c = 0; c < cornerCount; c++) {
    const v = indices[c];
    const b0 = bits[c * 4], b1 = bits[c * 4 + 1], b2 = bits[c * 4 + 2], b3 = bits[c * 4 + 3];
    if (!used[v]) {
      used[v] = 1;
      outBits[v * 4] = b0; outBits[v * 4 + 1] = b1; outBits[v * 4 + 2] = b2; outBits[v * 4 + 3] = b3;
      outIndices[c] = v;
      continue;
    }
    let o = v, last = v;
    while (o !== NONE) {
      if (outBits[o * 4] === b0 && outBits[o * 4 + 1] === b1 && outBits[o * 4 + 2] === b2 && outBits[o * 4 + 3] === b3) break;
      last = o;
      o = next[o];
    }
    if (o === NONE) {
      o = count++;
      next[last] = o;
      source[o] = v;
      outBits[o * 4] = b0; outBits[o * 4 + 1] = b1; outBits[o * 4 + 2] = b2; outBits[o * 4 + 3] = b3;
    }
    outIndices[c] = o;
  }
  const tangents = new Float32Array(outBits.buffer, 0, count * 4).slice();
  let unused = 0;
  for (let v = 0; v < vertexCount; v++) {
    if (used[v]) continue;
    unused++;
    writeFallbackTangent(tangents, v * 4, normals[v * 3], normals[v * 3 + 1], normals[v * 3 + 2]);
  }
  return { tangents, indices: outIndices, sourceVertex: source.slice(0, count), unusedVertices: unused };
}
