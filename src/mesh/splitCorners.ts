/**
 * Based on: the usual re-indexing of an indexed mesh by per-corner values: a vertex is
 * duplicated only where its corners carry different values (compared bit for bit).
 */

const NONE = 0xffffffff;

/** A copy of `a` in a longer array, the new tail filled with `fill`. */
function grown(a: Uint32Array<ArrayBuffer>, length: number, fill: number): Uint32Array<ArrayBuffer> {
  const b = new Uint32Array(length);
  if (fill !== 0) b.fill(fill, a.length);
  b.set(a);
  return b;
}

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
  // Room for the input vertices plus some splits; grows by doubling (splits are usually few).
  let capacity = vertexCount + Math.min(cornerCount, Math.max(1024, vertexCount >>> 3));
  let outBits = new Uint32Array(capacity * stride);
  let next = new Uint32Array(capacity).fill(NONE);
  const used = new Uint8Array(vertexCount);
  let source = new Uint32Array(capacity);

  const outIndices = new Uint32Array(cornerCount);
  let count = vertexCount;
  for (let v = 0; v < vertexCount; v++) source[v] = v;
  if (stride === 4) {
    // The common case (tangent frames), unrolled.
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
        if (count === capacity) {
          capacity = Math.min(vertexCount + cornerCount, capacity * 2);
          outBits = grown(outBits, capacity * stride, 0);
          next = grown(next, capacity, NONE);
          source = grown(source, capacity, 0);
        }
        o = count++;
        next[last] = o;
        source[o] = v;
        outBits[o * 4] = b0; outBits[o * 4 + 1] = b1; outBits[o * 4 + 2] = b2; outBits[o * 4 + 3] = b3;
      }
      outIndices[c] = o;
    }
  } else {
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
        if (count === capacity) {
          capacity = Math.min(vertexCount + cornerCount, capacity * 2);
          outBits = grown(outBits, capacity * stride, 0);
          next = grown(next, capacity, NONE);
          source = grown(source, capacity, 0);
        }
        o = count++;
        next[last] = o;
        source[o] = v;
        for (let k = 0; k < stride; k++) outBits[o * stride + k] = bits[cb + k];
      }
      outIndices[c] = o;
    }
  }
  const values = new Float32Array(outBits.buffer, 0, count * stride).slice();
  return { values, indices: outIndices, sourceVertex: source.slice(0, count), used };
}
