/**
 * Based on: the usual re-indexing of an indexed mesh by per-corner values: a vertex is
 * duplicated only where its corners carry different values (compared bit for bit).
 */

const NONE = 0xffffffff;

/** Output of `splitByCornerValues`. */
export interface CornerSplit {
  /** `stride` values per output vertex (zero for input vertices no triangle uses). */
  values: Float32Array;
  indices: Uint32Array;
  sourceVertex: Uint32Array;
  /** 1 for input vertices some triangle uses. */
  used: Uint8Array;
}

/**
 * Re-indexes a triangle list so each output vertex carries one value of `stride` floats.
 * For input vertex v, the first distinct value among its corners (in corner order) keeps
 * index v; each further distinct value becomes a new vertex appended after the input
 * vertices, in order of first appearance. Returns values per output vertex, the new indices
 * and, per output vertex, the input vertex it copies.
 * Preconditions: cornerValues.length === indices.length * stride; indices < vertexCount.
 */
export function splitByCornerValues(
  cornerValues: Float32Array,
  stride: number,
  indices: Uint32Array,
  vertexCount: number,
): CornerSplit {
  const cornerCount = indices.length;
  const bits = new Uint32Array(cornerValues.buffer, cornerValues.byteOffset, cornerCount * stride);
  const capacity = vertexCount + cornerCount;
  const outBits = new Uint32Array(capacity * stride);
  const next = new Uint32Array(capacity).fill(NONE);
  const used = new Uint8Array(vertexCount);
  const source = new Uint32Array(capacity);
  const outIndices = new Uint32Array(cornerCount);
  let count = vertexCount;
  for (let v = 0; v < vertexCount; v++) source[v] = v;
  for (let c = 0; c < cornerCount; c++) {
    const v = indices[c];
    const cb = c * stride;
    if (!used[v]) {
      used[v] = 1;
      for (let k = 0; k < stride; k++) outBits[v * stride + k] = bits[cb + k];
      outIndices[c] = v;
      continue;
    }
    let o = v, last = v;
    while (o !== NONE) {
      let same = true;
      const ob = o * stride;
      for (let k = 0; k < stride; k++) {
        if (outBits[ob + k] !== bits[cb + k]) { same = false; break; }
      }
      if (same) break;
      last = o;
      o = next[o];
    }
    if (o === NONE) {
      o = count++;
      next[last] = o;
      source[o] = v;
      for (let k = 0; k < stride; k++) outBits[o * stride + k] = bits[cb + k];
    }
    outIndices[c] = o;
  }
  const values = new Float32Array(outBits.buffer, 0, count * stride).slice();
  return { values, indices: outIndices, sourceVertex: source.slice(0, count), used };
}
