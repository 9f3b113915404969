/**
 * Compaction of an indexed primitive to the vertices its indices reference.
 * Based on: glTF 2.0 specification, 3.7.2.1 (an indexed primitive's vertices are the
 * attribute elements its indices name; elements no index names take no part in it). Common
 * practice of exporters that pack many primitives into one shared vertex buffer.
 *
 * The referenced vertices keep their original (ascending) order, so a primitive that already
 * uses every vertex is left as it is. The cost is linear in the number of indices plus
 * k log k for the k referenced vertices, never in the size of the shared buffer: the scratch
 * arrays are sized once for the largest buffer and reused, with a generation stamp in place
 * of clearing.
 */
import type { AttributeData, PrimitiveData } from './asset.js';
import { gatherAttribute } from './decode.js';

/** Reusable scratch for compactIndices (one per asset solve). */
export interface CompactScratch {
  /** stamp[v] === generation: vertex v was seen in the current call. */
  stamp: Uint32Array;
  /** New index of vertex v (valid where stamped). */
  map: Uint32Array;
  generation: number;
}

/** An empty scratch; it grows to the largest vertex count it is used with. */
export function createCompactScratch(): CompactScratch {
  return { stamp: new Uint32Array(0), map: new Uint32Array(0), generation: 0 };
}

/** A primitive's indices over its referenced vertices only. */
export interface Compaction {
  /** The indices, renumbered over `vertices` (same order, same length). */
  indices: Uint32Array;
  /** The referenced original vertices, ascending: new vertex i is original vertex vertices[i]. */
  vertices: Uint32Array;
}

/**
 * Compacts `indices` over `vertexCount` vertices to the vertices they reference, in their
 * original order. Returns null when every vertex is referenced (nothing to compact).
 * Precondition: every index is below vertexCount.
 */
export function compactIndices(scratch: CompactScratch, indices: Uint32Array, vertexCount: number): Compaction | null {
  if (scratch.stamp.length < vertexCount) {
    scratch.stamp = new Uint32Array(vertexCount);
    scratch.map = new Uint32Array(vertexCount);
    scratch.generation = 0;
  }
  if (scratch.generation >= 0xfffffffe) {
    scratch.stamp.fill(0);
    scratch.generation = 0;
  }
  let gen = ++scratch.generation;
  const stamp = scratch.stamp;
  const map = scratch.map;
  const n = indices.length;
  // First pass: how many vertices are referenced (stamped with this call's generation).
  let k = 0;
  for (let i = 0; i < n; i++) {
    const v = indices[i];
    if (stamp[v] !== gen) {
      stamp[v] = gen;
      k++;
    }
  }
  if (k === vertexCount) return null;
  // The referenced vertices in ascending order: by a walk over the stamps when that is no
  // dearer than sorting them (k log k >= vertexCount, a primitive using most of its buffer),
  // else collected by a second pass over the indices and sorted, so a small primitive of a
  // huge shared buffer never pays for the buffer.
  const vertices = new Uint32Array(k);
  if (k * Math.log2(k + 1) >= vertexCount) {
    for (let v = 0, j = 0; v < vertexCount; v++) {
      if (stamp[v] === gen) {
        map[v] = j;
        vertices[j++] = v;
      }
    }
  } else {
    gen = ++scratch.generation;
    for (let i = 0, j = 0; i < n; i++) {
      const v = indices[i];
      if (stamp[v] !== gen) {
        stamp[v] = gen;
        vertices[j++] = v;
      }
    }
    vertices.sort();
    for (let i = 0; i < k; i++) map[vertices[i]] = i;
  }
  const out = new Uint32Array(n);
  for (let i = 0; i < n; i++) out[i] = map[indices[i]];
  return { indices: out, vertices };
}

/**
 * `attr` gathered at `vertices`, memoised in `memo` by the source object: attributes (and
 * morph targets) that share one decoded accessor share one compacted copy.
 */
export function compactAttribute(memo: Map<AttributeData, AttributeData>, attr: AttributeData, vertices: Uint32Array): AttributeData {
  let out = memo.get(attr);
  if (!out) {
    out = gatherAttribute(attr, vertices);
    memo.set(attr, out);
  }
  return out;
}

/**
 * `p` over only the vertices its indices reference (attributes and morph targets gathered,
 * indices renumbered, `compactedFrom` naming each new vertex's original), or `p` itself when
 * it is not indexed or uses every vertex. Attributes
 * and targets that share one decoded accessor share one compacted copy.
 */
export function compactPrimitive(scratch: CompactScratch, p: PrimitiveData): PrimitiveData {
  const first = p.attributes.POSITION ?? Object.values(p.attributes)[0];
  if (!p.indices || !first) return p;
  const c = compactIndices(scratch, p.indices, first.array.length / first.itemSize);
  if (!c) return p;
  const memo = new Map<AttributeData, AttributeData>();
  const gatherMap = (map: Record<string, AttributeData>) => {
    const out: Record<string, AttributeData> = {};
    for (const name of Object.keys(map)) out[name] = compactAttribute(memo, map[name], c.vertices);
    return out;
  };
  return { ...p, attributes: gatherMap(p.attributes), indices: c.indices, targets: p.targets.map(gatherMap), compactedFrom: c.vertices };
}
