/**
 * Based on: the usual vertex-splitting rule of tangent generation (a vertex is duplicated
 * only where the frames of its corners differ). Frames compare bit for bit after rounding to
 * float32, so the output is a pure function of the input.
 */
import { SLOT_SPLIT_FRAME_OF, SLOT_SPLIT_HASHED, SLOT_SPLIT_SOURCE, threadArena } from '../mesh/arena.js';
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
 * Output vertices by (source vertex, frame bits): open addressing over output vertex ids,
 * doubled at half load. Keeps a vertex with many distinct frames (the hub of a fan of mirrored
 * triangles) linear instead of walking a list of its variants for every corner.
 */
class VariantTable {
  private table = new Uint32Array(1024).fill(NONE);
  private entries = 0;
  constructor(private readonly bits: Uint32Array) {}

  private hash(v: number, g: number): number {
    const b = this.bits;
    let h = Math.imul(v, 0x9e3779b1) ^ Math.imul(b[g * 4], 0x85ebca77);
    h = Math.imul(h ^ (h >>> 15), 0x27d4eb2f) ^ Math.imul(b[g * 4 + 1], 0xc2b2ae3d);
    h = Math.imul(h ^ (h >>> 13), 0x165667b1) ^ Math.imul(b[g * 4 + 2], 0xd3a2646c) ^ Math.imul(b[g * 4 + 3], 0xfd7046c5);
    return (h ^ (h >>> 16)) >>> 0;
  }

  /** The output vertex of source `v` whose frame equals frame `f` bit for bit, or NONE. */
  find(v: number, f: number, frameOf: Uint32Array, source: Uint32Array): number {
    const b = this.bits, t = this.table, mask = t.length - 1;
    for (let slot = this.hash(v, f) & mask; ; slot = (slot + 1) & mask) {
      const o = t[slot];
      if (o === NONE) return NONE;
      if (source[o] !== v) continue;
      const g = frameOf[o];
      if (g === f || (b[g * 4] === b[f * 4] && b[g * 4 + 1] === b[f * 4 + 1] && b[g * 4 + 2] === b[f * 4 + 2] && b[g * 4 + 3] === b[f * 4 + 3])) return o;
    }
  }

  /** Adds output vertex `o` (its source and frame already set). */
  insert(o: number, frameOf: Uint32Array, source: Uint32Array): void {
    if ((this.entries + 1) * 2 > this.table.length) {
      const old = this.table;
      this.table = new Uint32Array(old.length * 2).fill(NONE);
      for (let i = 0; i < old.length; i++) if (old[i] !== NONE) this.place(old[i], frameOf, source);
    }
    this.place(o, frameOf, source);
    this.entries++;
  }

  private place(o: number, frameOf: Uint32Array, source: Uint32Array): void {
    const t = this.table, mask = t.length - 1;
    let slot = this.hash(source[o], frameOf[o]) & mask;
    while (t[slot] !== NONE) slot = (slot + 1) & mask;
    t[slot] = o;
  }
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
  // Per output vertex: its frame id and its source vertex.
  const arena = threadArena();
  let frameOf = arena.u32(SLOT_SPLIT_FRAME_OF, capacity, NONE);
  let source = arena.u32(SLOT_SPLIT_SOURCE, capacity);
  // Variants beyond a vertex's first, by (source, frame bits); allocated on the first split.
  let variants: VariantTable | null = null;
  const hashed = arena.u8(SLOT_SPLIT_HASHED, vertexCount, 0);
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
    // Another frame at a vertex that has one: look (v, frame bits) up in a hash table, so a
    // vertex with many distinct frames (the hub of a fan of mirrored triangles) stays linear.
    variants ??= new VariantTable(bits);
    if (!hashed[v]) {
      hashed[v] = 1;
      variants.insert(v, frameOf, source);
    }
    let o = variants.find(v, f, frameOf, source);
    if (o === NONE) {
      if (count === capacity) {
        capacity = Math.min(vertexCount + cornerCount, capacity * 2);
        frameOf = arena.growU32(SLOT_SPLIT_FRAME_OF, frameOf, capacity, NONE);
        source = arena.growU32(SLOT_SPLIT_SOURCE, source, capacity, 0);
      }
      o = count++;
      source[o] = v;
      frameOf[o] = f;
      variants.insert(o, frameOf, source);
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
