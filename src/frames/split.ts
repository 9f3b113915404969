/**
 * Based on: the usual vertex-splitting rule of tangent generation (a vertex is duplicated
 * only where the frames of its corners differ). Frames compare bit for bit after rounding to
 * float32, so the output is a pure function of the input.
 */
import { splitByCornerValues } from '../mesh/splitCorners.js';
import { writeFallbackTangent } from './fallback.js';

/** Output of `splitByCornerFrames`. */
export interface SplitResult {
  tangents: Float32Array;
  indices: Uint32Array;
  sourceVertex: Uint32Array;
  /** Vertices not used by any triangle (they keep the fallback frame). */
  unusedVertices: number;
}

/**
 * Re-indexes a triangle list so that each output vertex carries one frame (see
 * `splitByCornerValues` for the order of output vertices). Vertices no triangle uses keep
 * their index and get the fallback frame from their normal. `cornerTangents` holds 4 floats
 * per corner. Returns tangents (4 per output vertex), the new indices and the source map.
 * Preconditions: indices.length * 4 === cornerTangents.length; indices < vertexCount.
 */
export function splitByCornerFrames(
  cornerTangents: Float32Array,
  indices: Uint32Array,
  normals: Float32Array,
  vertexCount: number,
): SplitResult {
  const s = splitByCornerValues(cornerTangents, 4, indices, vertexCount);
  let unused = 0;
  for (let v = 0; v < vertexCount; v++) {
    if (s.used[v]) continue;
    unused++;
    writeFallbackTangent(s.values, v * 4, normals[v * 3], normals[v * 3 + 1], normals[v * 3 + 2]);
  }
  return { tangents: s.values, indices: s.indices, sourceVertex: s.sourceVertex, unusedVertices: unused };
}
