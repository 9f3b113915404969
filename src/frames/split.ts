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

/** A copy of `a` in a longer array, the new tail filled with `fill`. */
function grown(a: Uint32Array<ArrayBuffer>, length: number, fill: number): Uint32Array<ArrayBuffer> {
  const b = new Uint32Array(length);
  if (fill !== 0) b.fill(fill, a.length);
  b.set(a);
  return b;
}

/**
 * Re-indexes a triangle list so that each output vertex carries one frame. Corner c uses frame
 * `cornerFrame[c]` of `frames` (4 floats each). For input vertex v, the first distinct frame
 * among its corners (in corner order) keeps index v; each further distinct frame (compared bit
 * for bit, so two groups with equal frames share a vertex) becomes a new vertex appended after
 * the input vertices, in order of first appearance. Vertices no triangle uses keep their index
 * and get the fallback frame from their normal. Returns tangents (4 per output vertex), the
 * new indices and, per output vertex, the input vertex it copies.
 * Preconditions: cornerFrame has one entry per index, each < frames.length / 4; indices <
 * vertexCount.
 */
export function splitByCornerFrames(
  cornerFrame: Uint32Array,
  frames: Float32Array,
  indices: Uint32Array,
  normals: Float32Array,
  vertexCount: number,
): SplitResult {
  const cornerCount = indices.length;
  const bits = new Uint32Array(frames.buffer, frames.byteOffset, frames.length);
  let capacity = vertexCount + Math.min(cornerCount, Math.max(1024, vertexCount >>> 3));
  // Per output vertex: its frame id, the next variant of the same source, the source.
  let frameOf = new Uint32Array(capacity).fill(NONE);
  let next = new Uint32Array(capacity).fill(NONE);
  let source = new Uint32Array(capacity);
  const outIndices = new Uint32Array(cornerCount);
  let count = vertexCount;
  for (let v = 0; v < vertexCount; v++) source[v] = v;
  for (let c = 0; c < cornerCount; c++) {
    const v = indices[c];
    const f = cornerFrame[c];
    const first = frameOf[v];
    if (first === NONE) {
      frameOf[v] = f;
      outIndices[c] = v;
      continue;
    }
    if (first === f) {
      outIndices[c] = v;
      continue;
    }
    const b0 = bits[f * 4], b1 = bits[f * 4 + 1], b2 = bits[f * 4 + 2], b3 = bits[f * 4 + 3];
    let o = v, last = v;
    while (o !== NONE) {
      const g = frameOf[o];
      if (g === f || (bits[g * 4] === b0 && bits[g * 4 + 1] === b1 && bits[g * 4 + 2] === b2 && bits[g * 4 + 3] === b3)) break;
      last = o;
      o = next[o];
    }
    if (o === NONE) {
      if (count === capacity) {
        capacity = Math.min(vertexCount + cornerCount, capacity * 2);
        frameOf = grown(frameOf, capacity, NONE);
        next = grown(next, capacity, NONE);
        source = grown(source, capacity, 0);
      }
      o = count++;
      next[last] = o;
      source[o] = v;
      frameOf[o] = f;
    }
    outIndices[c] = o;
  }
  const tangents = new Float32Array(count * 4);
  let unused = 0;
  for (let o = 0; o < count; o++) {
    const g = frameOf[o];
    if (g === NONE) {
      unused++;
      writeFallbackTangent(tangents, o * 4, normals[o * 3], normals[o * 3 + 1], normals[o * 3 + 2]);
      continue;
    }
    tangents[o * 4] = frames[g * 4]; tangents[o * 4 + 1] = frames[g * 4 + 1];
    tangents[o * 4 + 2] = frames[g * 4 + 2]; tangents[o * 4 + 3] = frames[g * 4 + 3];
  }
  return { tangents, indices: outIndices, sourceVertex: source.slice(0, count), unusedVertices: unused };
}
