/**
 * Based on: the welding rule of the MikkTSpace method (Mikkelsen 2008): two vertices are the
 * same when position, normal and texture coordinate are all equal. Hash-based on the float
 * bit patterns (no string keys), with -0 read as +0 so equal floats always weld.
 */
import { SLOT_WELD_BUCKETS, SLOT_WELD_CURSOR, SLOT_WELD_HASH, SLOT_WELD_ORDER, SLOT_WELD_TABLE, threadArena } from './arena.js';

const EMPTY = 0xffffffff;

/** log2 of the buckets welding sorts vertices into by the top bits of their hash. */
const BUCKET_BITS = 8;

/**
 * Welds vertices whose position (3), normal (3) and uv (2) are exactly equal.
 * Writes into `out` (length >= vertexCount) the representative of each vertex: the lowest
 * vertex index with the same key. Returns the number of distinct welded vertices.
 * Vertices are hashed once, sorted into 256 buckets by the hash's top bits (a counting sort
 * that keeps vertex order), and each bucket is welded with its own small open-addressing
 * table of (vertex, hash) pairs, which stays in cache where one table over the whole mesh
 * costs a cache and TLB miss per vertex. Equal keys have equal hashes, so they meet in one
 * bucket, in vertex order: the first is the lowest index.
 * Preconditions: positions/normals hold 3 floats and uvs 2 floats per vertex.
 */
export function weldVertices(
  out: Uint32Array,
  positions: Float32Array,
  normals: Float32Array,
  uvs: Float32Array,
  vertexCount: number,
): number {
  const pBits = new Uint32Array(positions.buffer, positions.byteOffset, vertexCount * 3);
  const nBits = new Uint32Array(normals.buffer, normals.byteOffset, vertexCount * 3);
  const tBits = new Uint32Array(uvs.buffer, uvs.byteOffset, vertexCount * 2);
  const arena = threadArena();
  const shift = 32 - BUCKET_BITS;
  const hashOf = arena.u32(SLOT_WELD_HASH, vertexCount);
  const bucketStart = arena.u32(SLOT_WELD_BUCKETS, (1 << BUCKET_BITS) + 1, 0);
  let distinct = 0, hashed = 0;
  for (let v = 0; v < vertexCount; v++) {
    // A NaN equals nothing, not even itself: such a vertex welds to no other and stays out of
    // the table (many NaN vertices would otherwise pile up in one probe run).
    const px = positions[v * 3], py = positions[v * 3 + 1], pz = positions[v * 3 + 2];
    const nx = normals[v * 3], ny = normals[v * 3 + 1], nz = normals[v * 3 + 2];
    const tu = uvs[v * 2], tv = uvs[v * 2 + 1];
    out[v] = v;
    if (px !== px || py !== py || pz !== pz || nx !== nx || ny !== ny || nz !== nz || tu !== tu || tv !== tv) {
      distinct++;
      hashOf[v] = 0;
      continue;
    }
    // Canonical bits: -0 (0x80000000) reads as +0.
    let p0 = pBits[v * 3], p1 = pBits[v * 3 + 1], p2 = pBits[v * 3 + 2];
    let n0 = nBits[v * 3], n1 = nBits[v * 3 + 1], n2 = nBits[v * 3 + 2];
    let t0 = tBits[v * 2], t1 = tBits[v * 2 + 1];
    if (p0 === 0x80000000) p0 = 0; if (p1 === 0x80000000) p1 = 0; if (p2 === 0x80000000) p2 = 0;
    if (n0 === 0x80000000) n0 = 0; if (n1 === 0x80000000) n1 = 0; if (n2 === 0x80000000) n2 = 0;
    if (t0 === 0x80000000) t0 = 0; if (t1 === 0x80000000) t1 = 0;
    let h = Math.imul(p0, 0x9e3779b1) ^ Math.imul(p1, 0x85ebca77) ^ Math.imul(p2, 0xc2b2ae3d);
    h = Math.imul(h ^ (h >>> 15), 0x27d4eb2f) ^ Math.imul(n0, 0x165667b1) ^ Math.imul(n1, 0xd3a2646c) ^ Math.imul(n2, 0xfd7046c5);
    h = Math.imul(h ^ (h >>> 13), 0xb55a4f09) ^ Math.imul(t0, 0x9e3779b1) ^ Math.imul(t1, 0x7feb352d);
    h = Math.imul(h ^ (h >>> 16), 0x85ebca6b);
    h = (h ^ (h >>> 13)) | 1; // never 0: 0 marks a vertex left out
    hashOf[v] = h;
    bucketStart[(h >>> shift) + 1]++;
    hashed++;
  }
  let largest = 0;
  for (let k = 0; k < 1 << BUCKET_BITS; k++) {
    if (bucketStart[k + 1] > largest) largest = bucketStart[k + 1];
    bucketStart[k + 1] += bucketStart[k];
  }
  const order = arena.u32(SLOT_WELD_ORDER, hashed * 2);
  const cursor = arena.u32(SLOT_WELD_CURSOR, 1 << BUCKET_BITS);
  cursor.set(bucketStart.subarray(0, 1 << BUCKET_BITS));
  for (let v = 0; v < vertexCount; v++) {
    const h = hashOf[v];
    if (h === 0) continue;
    const o = cursor[h >>> shift]++ * 2;
    order[o] = v; order[o + 1] = h;
  }
  let size = 16;
  while (size < largest * 2) size <<= 1;
  const table = arena.u32(SLOT_WELD_TABLE, size * 2);
  for (let k = 0; k < 1 << BUCKET_BITS; k++) {
    const s0 = bucketStart[k], s1 = bucketStart[k + 1];
    if (s1 === s0) continue;
    let tableSize = 16;
    while (tableSize < (s1 - s0) * 2) tableSize <<= 1;
    const mask = tableSize - 1;
    table.fill(EMPTY, 0, tableSize * 2);
    for (let i = s0; i < s1; i++) {
      const v = order[i * 2], h = order[i * 2 + 1];
      let slot = h & mask;
      for (;;) {
        const w = table[slot * 2];
        if (w === EMPTY) {
          table[slot * 2] = v; table[slot * 2 + 1] = h;
          distinct++;
          break;
        }
        if (
          table[slot * 2 + 1] === h &&
          positions[w * 3] === positions[v * 3] && positions[w * 3 + 1] === positions[v * 3 + 1] &&
          positions[w * 3 + 2] === positions[v * 3 + 2] && normals[w * 3] === normals[v * 3] &&
          normals[w * 3 + 1] === normals[v * 3 + 1] && normals[w * 3 + 2] === normals[v * 3 + 2] &&
          uvs[w * 2] === uvs[v * 2] && uvs[w * 2 + 1] === uvs[v * 2 + 1]
        ) {
          out[v] = w;
          break;
        }
        slot = (slot + 1) & mask;
      }
    }
  }
  return distinct;
}

/**
 * Welds vertices by exactly equal position only (for smooth-normal generation).
 * Writes into `out` the lowest vertex index with the same position; returns the number of
 * distinct positions. Precondition: positions hold 3 floats per vertex.
 */
export function weldPositions(out: Uint32Array, positions: Float32Array, vertexCount: number): number {
  const bits = new Uint32Array(positions.buffer, positions.byteOffset, vertexCount * 3);
  let size = 16;
  while (size < vertexCount * 2) size <<= 1;
  const mask = size - 1;
  const table = threadArena().u32(SLOT_WELD_TABLE, size, EMPTY);
  let distinct = 0;
  for (let v = 0; v < vertexCount; v++) {
    const px = positions[v * 3], py = positions[v * 3 + 1], pz = positions[v * 3 + 2];
    if (px !== px || py !== py || pz !== pz) { out[v] = v; distinct++; continue; } // NaN welds to nothing
    let p0 = bits[v * 3], p1 = bits[v * 3 + 1], p2 = bits[v * 3 + 2];
    if (p0 === 0x80000000) p0 = 0; if (p1 === 0x80000000) p1 = 0; if (p2 === 0x80000000) p2 = 0;
    let h = Math.imul(p0, 0x9e3779b1) ^ Math.imul(p1, 0x85ebca77) ^ Math.imul(p2, 0xc2b2ae3d);
    h = Math.imul(h ^ (h >>> 15), 0x27d4eb2f);
    h ^= h >>> 16;
    let slot = h & mask;
    for (;;) {
      const w = table[slot];
      if (w === EMPTY) { table[slot] = v; out[v] = v; distinct++; break; }
      if (positions[w * 3] === positions[v * 3] && positions[w * 3 + 1] === positions[v * 3 + 1] && positions[w * 3 + 2] === positions[v * 3 + 2]) {
        out[v] = w;
        break;
      }
      slot = (slot + 1) & mask;
    }
  }
  return distinct;
}
