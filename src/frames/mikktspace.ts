/**
 * Based on: M. Mikkelsen, "Simulation of Wrinkled Surfaces Revisited" (MSc thesis, University
 * of Copenhagen, 2008), the MikkTSpace method that glTF 2.0 names for generated tangents.
 * Follows the steps in METHODS.md: welding, per-triangle first-order derivatives, degenerate
 * triangles set aside, groups at each welded vertex connected through shared edges with one
 * orientation, angle-weighted projected sums, one frame per group. The angular threshold is
 * the method's default of 180 degrees, so each group forms a single sub-group. Details of the
 * reference code (edge pairing order, orientation adoption of "group with any" triangles,
 * quad orientation forcing) follow our memory of the published reference implementation.
 */
import { MIKK_NOT_ZERO, PROJECTED_ZERO, UV_DEGENERATE_RELATIVE } from '../mesh/tolerances.js';
import {
  SLOT_ADJ_EDGES, SLOT_ADJ_FILL, SLOT_ADJ_START, SLOT_ADJ_TARGETS, SLOT_CONTRIB, SLOT_CORNER_VERTEX, SLOT_FIRST_GOOD, SLOT_FRAMES, SLOT_NEIGHBOUR,
  SLOT_TRIANGLE_FLAGS, SLOT_WELD_REP, threadArena, type Arena,
} from '../mesh/arena.js';
import { weldVertices } from '../mesh/weld.js';
import { indexOutOfRange } from '../mesh/errors.js';
import { writeFallbackTangent } from './fallback.js';

const NONE = 0xffffffff;
const ORIENT_PRESERVING = 1;
const GROUP_WITH_ANY = 2;
const DEGENERATE = 4;

/** What a `mikktspace` solve returns besides the corner-to-frame map. */
export interface MikktspaceResult {
  /**
   * 4 floats per frame: xyz unit, w = +1 | -1 (length 4 * frameCount). Scratch of this
   * thread's arena (SLOT_FRAMES): valid until the next solve on this thread.
   */
  frames: Float32Array;
  frameCount: number;
  degenerateUvTriangles: number;
  mirroredTriangles: number;
  /** Corners whose frame came from the documented fallback. */
  fallbackCorners: number;
  /** Distinct welded vertices. */
  weldedVertices: number;
}

/** Growable store of frames, 4 floats each. */
interface FrameStore {
  data: Float32Array<ArrayBuffer>;
  count: number;
}

/** Appends room for one frame (the store lives in the arena's SLOT_FRAMES) and returns its id. */
function newFrame(store: FrameStore, arena: Arena): number {
  if ((store.count + 1) * 4 > store.data.length) store.data = arena.growF32(SLOT_FRAMES, store.data, store.data.length * 2, 0);
  return store.count++;
}

/** Appends a frame holding the documented fallback for welded vertex `v`'s normal; returns its id. */
function newFallbackFrame(store: FrameStore, arena: Arena, normals: Float32Array, v: number): number {
  const g = newFrame(store, arena);
  writeFallbackTangent(store.data, g * 4, normals[v * 3], normals[v * 3 + 1], normals[v * 3 + 2]);
  return g;
}

/**
 * Computes tangent frames with the MikkTSpace method: one frame per group, and for every
 * triangle corner (corner c = triangle c/3, slot c%3) the id of its frame in `cornerFrame`
 * and in `undefinedCorner` 1 where the frame is the documented fallback (no contributing
 * triangle reached the corner, or their directions summed to zero: the method defines no
 * tangent there, METHODS.md step 8), else 0.
 * A frame is xyz unit, w = +1 for an orientation-preserving group, -1 otherwise. `vSign` is +1
 * when v grows upward and -1 for glTF's top-left origin (negates every dv). `faces`, when
 * given, holds an original face id per triangle; exactly two consecutive triangles with the
 * same id (a split quad) are forced to one orientation, while three or more (a fanned polygon)
 * are independent triangles. Corners with no usable direction get the
 * documented fallback (see fallback.ts). Returns the frames and the counts.
 * Throws a TanframeError ('invalid-argument') before using an index >= vertexCount.
 * Preconditions: indices hold 3 * triangleCount entries; normals are unit;
 * cornerFrame.length and undefinedCorner.length >= 3 * triangleCount.
 */
export function computeMikktspaceFrames(
  cornerFrame: Uint32Array,
  undefinedCorner: Uint8Array,
  indices: Uint32Array,
  positions: Float32Array,
  normals: Float32Array,
  uvs: Float32Array,
  faces: Uint32Array | null,
  vSign: number,
  triangleCount: number,
  vertexCount: number,
): MikktspaceResult {
  const cornerCount = triangleCount * 3;
  const arena = threadArena();
  // 1. Welding: connectivity comes from welded indices.
  const rep = arena.u32(SLOT_WELD_REP, vertexCount);
  const weldedVertices = weldVertices(rep, positions, normals, uvs, vertexCount);
  const wi = arena.u32(SLOT_CORNER_VERTEX, cornerCount);

  // 2. Per-triangle derivatives and flags.
  const flags = arena.u8(SLOT_TRIANGLE_FLAGS, triangleCount);
  // Per corner: the triangle's derivative projected on the corner's tangent plane, normalised
  // and weighted by the projected corner angle (zero for triangles that contribute nothing;
  // every entry is written below, so the arena's old contents never show).
  const contrib = arena.f32(SLOT_CONTRIB, cornerCount * 3);
  let degenerateUv = 0, mirrored = 0, degenerateTriangles = 0;
  for (let t = 0; t < triangleCount; t++) {
    // The welded corners, written here (one pass over the corners, not two). The index range
    // is checked here too, before any index is used, instead of in a pass of its own.
    const i0 = indices[t * 3], i1 = indices[t * 3 + 1], i2 = indices[t * 3 + 2];
    if (!(i0 < vertexCount && i1 < vertexCount && i2 < vertexCount)) throw indexOutOfRange();
    const a = rep[i0], b = rep[i1], c = rep[i2];
    wi[t * 3] = a; wi[t * 3 + 1] = b; wi[t * 3 + 2] = c;
    let f = GROUP_WITH_ANY;
    const u0 = uvs[a * 2], v0 = uvs[a * 2 + 1];
    const t21x = uvs[b * 2] - u0, t21y = vSign * (uvs[b * 2 + 1] - v0);
    const t31x = uvs[c * 2] - u0, t31y = vSign * (uvs[c * 2 + 1] - v0);
    const area2 = t21x * t31y - t21y * t31x;
    const scale = t21x * t21x + t21y * t21y + t31x * t31x + t31y * t31y;
    if (!(Math.abs(area2) > UV_DEGENERATE_RELATIVE * scale)) degenerateUv++;
    else if (area2 < 0) mirrored++;
    if (a === b || a === c || b === c) {
      flags[t] = f | DEGENERATE;
      degenerateTriangles++;
      contrib.fill(0, t * 9, t * 9 + 9);
      continue;
    }
    const x0 = positions[a * 3], y0 = positions[a * 3 + 1], z0 = positions[a * 3 + 2];
    const d1x = positions[b * 3] - x0, d1y = positions[b * 3 + 1] - y0, d1z = positions[b * 3 + 2] - z0;
    const d2x = positions[c * 3] - x0, d2y = positions[c * 3 + 1] - y0, d2z = positions[c * 3 + 2] - z0;
    let ox = t31y * d1x - t21y * d2x, oy = t31y * d1y - t21y * d2y, oz = t31y * d1z - t21y * d2z;
    const tx = -t31x * d1x + t21x * d2x, ty = -t31x * d1y + t21x * d2y, tz = -t31x * d1z + t21x * d2z;
    if (area2 > 0) f |= ORIENT_PRESERVING;
    const absArea = Math.abs(area2);
    if (absArea > MIKK_NOT_ZERO) {
      const lenOs = Math.sqrt(ox * ox + oy * oy + oz * oz);
      const lenOt = Math.sqrt(tx * tx + ty * ty + tz * tz);
      const s = area2 > 0 ? 1 : -1;
      if (lenOs > MIKK_NOT_ZERO) { ox *= s / lenOs; oy *= s / lenOs; oz *= s / lenOs; }
      if (lenOs / absArea > MIKK_NOT_ZERO && lenOt / absArea > MIKK_NOT_ZERO) f &= ~GROUP_WITH_ANY;
    }
    flags[t] = f;
    if (!(f & GROUP_WITH_ANY)) {
      // Edges: e01 = d1, e02 = d2, e12 = d2 - d1. Corner 0 sees (e02, e01), corner 1
      // (-e01, e12), corner 2 (-e12, -e02); dot products and squared lengths are shared.
      const e12x = d2x - d1x, e12y = d2y - d1y, e12z = d2z - d1z;
      const l01 = d1x * d1x + d1y * d1y + d1z * d1z;
      const l02 = d2x * d2x + d2y * d2y + d2z * d2z;
      const l12 = e12x * e12x + e12y * e12y + e12z * e12z;
      const dot0 = d2x * d1x + d2y * d1y + d2z * d1z;
      const dot1 = -(d1x * e12x + d1y * e12y + d1z * e12z);
      const dot2 = e12x * d2x + e12y * d2y + e12z * d2z;
      // One loop over the corners (no call: doubles passed to a non-inlined function are boxed).
      for (let k = 0; k < 3; k++) {
        let v = a, ax = d2x, ay = d2y, az = d2z, bx = d1x, by = d1y, bz = d1z, aa = l02, bb = l01, ab = dot0;
        if (k === 1) {
          v = b; ax = -d1x; ay = -d1y; az = -d1z; bx = e12x; by = e12y; bz = e12z; aa = l01; bb = l12; ab = dot1;
        } else if (k === 2) {
          v = c; ax = -e12x; ay = -e12y; az = -e12z; bx = -d2x; by = -d2y; bz = -d2z; aa = l12; bb = l02; ab = dot2;
        }
        // Corner contribution: the derivative projected on the plane of v's normal n and
        // normalised, times the angle between the corner's two edges projected on the same
        // plane. With unit n: |a'|^2 = |a|^2 - (n.a)^2 and a'.b' = a.b - (n.a)(n.b). A projected
        // edge of zero length gives cos 0, as in the method.
        const nx = normals[v * 3], ny = normals[v * 3 + 1], nz = normals[v * 3 + 2];
        const d = nx * ox + ny * oy + nz * oz;
        let px = ox - nx * d, py = oy - ny * d, pz = oz - nz * d;
        const pl = Math.sqrt(px * px + py * py + pz * pz);
        if (pl > MIKK_NOT_ZERO) { px /= pl; py /= pl; pz /= pl; }
        const na = nx * ax + ny * ay + nz * az, nb = nx * bx + ny * by + nz * bz;
        const la2 = aa - na * na, lb2 = bb - nb * nb;
        let cos = la2 > PROJECTED_ZERO * aa && lb2 > PROJECTED_ZERO * bb ? (ab - na * nb) / Math.sqrt(la2 * lb2) : 0;
        if (cos > 1) cos = 1; else if (cos < -1) cos = -1;
        const angle = Math.acos(cos);
        const o = (t * 3 + k) * 3;
        contrib[o] = angle * px; contrib[o + 1] = angle * py; contrib[o + 2] = angle * pz;
      }
    } else {
      contrib.fill(0, t * 9, t * 9 + 9);
    }
  }

  // Split quads (exactly two consecutive triangles with one face id) share one orientation.
  // A longer run is a polygon with more corners, fanned by the caller: the method takes only
  // triangles and quads, so its triangles stay independent (METHODS.md step 7).
  if (faces) {
    let t = 0;
    while (t < triangleCount) {
      let end = t + 1;
      while (end < triangleCount && faces[end] === faces[t]) end++;
      if (end - t === 2) {
        const fa = flags[t], fb = flags[t + 1];
        if (!((fa | fb) & DEGENERATE) && (fa & ORIENT_PRESERVING) !== (fb & ORIENT_PRESERVING)) {
          let first = (fb & GROUP_WITH_ANY) !== 0;
          if (!first) first = uvArea(uvs, wi, t, vSign) >= uvArea(uvs, wi, t + 1, vSign);
          const src = first ? t : t + 1, dst = first ? t + 1 : t;
          flags[dst] = (flags[dst] & ~ORIENT_PRESERVING) | (flags[src] & ORIENT_PRESERVING);
        }
      }
      t = end;
    }
  }

  // 3. Edge adjacency over welded indices: edge i of t runs corner i -> corner i+1 and pairs
  //    with the first later triangle holding the opposite directed edge.
  const neighbour = buildNeighbours(arena, wi, flags, triangleCount, vertexCount);

  // 4-6. Groups at each welded vertex, evaluated as soon as they are complete.
  const cornerGroup = cornerFrame;
  cornerGroup.fill(NONE, 0, cornerCount);
  undefinedCorner.fill(0, 0, cornerCount);
  const store: FrameStore = { data: arena.f32(SLOT_FRAMES, 4 * Math.max(16, vertexCount + (vertexCount >>> 3))), count: 0 };
  let stack = new Uint32Array(1024);
  let members = new Uint32Array(64);
  let assigned = 0;
  let fallbackCorners = 0;
  for (let f = 0; f < triangleCount; f++) {
    if (flags[f] & GROUP_WITH_ANY) continue;
    for (let i = 0; i < 3; i++) {
      if (cornerGroup[f * 3 + i] !== NONE) continue;
      const g = newFrame(store, arena);
      const vrep = wi[f * 3 + i];
      const orient = flags[f] & ORIENT_PRESERVING;
      cornerGroup[f * 3 + i] = g;
      assigned++;
      let memberCount = 0;
      members[memberCount++] = f * 3 + i;
      // The group's sum, added as members join (member order). It starts from +0 so that a
      // first contribution of -0 sums to +0, as a sum from zero does.
      let sx = 0, sy = 0, sz = 0;
      sx += contrib[(f * 3 + i) * 3]; sy += contrib[(f * 3 + i) * 3 + 1]; sz += contrib[(f * 3 + i) * 3 + 2];
      let sp = 0;
      // Left neighbour first, then right (pushed in reverse).
      const r0 = neighbour[f * 3 + (i > 0 ? i - 1 : 2)], l0 = neighbour[f * 3 + i];
      if (r0 !== NONE) stack[sp++] = r0;
      if (l0 !== NONE) stack[sp++] = l0;
      while (sp > 0) {
        const t = stack[--sp];
        let j = 0;
        if (wi[t * 3] === vrep) j = 0;
        else if (wi[t * 3 + 1] === vrep) j = 1;
        else if (wi[t * 3 + 2] === vrep) j = 2;
        else continue;
        const cg = cornerGroup[t * 3 + j];
        if (cg !== NONE) continue;
        if (flags[t] & GROUP_WITH_ANY) {
          if (cornerGroup[t * 3] === NONE && cornerGroup[t * 3 + 1] === NONE && cornerGroup[t * 3 + 2] === NONE) {
            flags[t] = (flags[t] & ~ORIENT_PRESERVING) | orient;
          }
        }
        if ((flags[t] & ORIENT_PRESERVING) !== orient) continue;
        const c = t * 3 + j;
        cornerGroup[c] = g;
        assigned++;
        if (memberCount === members.length) {
          const grown = new Uint32Array(members.length * 2);
          grown.set(members);
          members = grown;
        }
        members[memberCount++] = c;
        sx += contrib[c * 3]; sy += contrib[c * 3 + 1]; sz += contrib[c * 3 + 2];
        const r = neighbour[t * 3 + (j > 0 ? j - 1 : 2)], l = neighbour[c];
        if (sp + 2 > stack.length) {
          const grown = new Uint32Array(stack.length * 2);
          grown.set(stack);
          stack = grown;
        }
        if (r !== NONE) stack[sp++] = r;
        if (l !== NONE) stack[sp++] = l;
      }
      // The frame: the normalised sum with the group's sign, or the fallback when nothing
      // contributed (written out here: doubles passed to a call that is not inlined are boxed).
      const frames = store.data, o = g * 4;
      const sl = Math.sqrt(sx * sx + sy * sy + sz * sz);
      if (sl > MIKK_NOT_ZERO && Number.isFinite(sl)) {
        frames[o] = sx / sl; frames[o + 1] = sy / sl; frames[o + 2] = sz / sl;
      } else {
        writeFallbackTangent(frames, o, normals[vrep * 3], normals[vrep * 3 + 1], normals[vrep * 3 + 2]);
        fallbackCorners += memberCount;
        for (let m = 0; m < memberCount; m++) undefinedCorner[members[m]] = 1;
      }
      frames[o + 3] = orient !== 0 ? 1 : -1;
    }
  }

  // Corners of non-degenerate triangles that joined no group (isolated "group with any"),
  // then degenerate triangles; each pass runs only when it has something to do, and the
  // first good corner of each welded vertex is recorded only when degenerate triangles need it.
  const unassigned = (triangleCount - degenerateTriangles) * 3 - assigned;
  if (unassigned > 0 || degenerateTriangles > 0) {
    const needFirst = degenerateTriangles > 0;
    const firstGood = needFirst ? arena.u32(SLOT_FIRST_GOOD, vertexCount, NONE) : null;
    let left = unassigned;
    for (let t = 0; t < triangleCount && (left > 0 || needFirst); t++) {
      if (flags[t] & DEGENERATE) continue;
      for (let i = 0; i < 3; i++) {
        const c = t * 3 + i;
        if (cornerGroup[c] === NONE) {
          cornerGroup[c] = newFallbackFrame(store, arena, normals, wi[c]);
          undefinedCorner[c] = 1;
          fallbackCorners++;
          left--;
        }
        if (firstGood !== null && firstGood[wi[c]] === NONE) firstGood[wi[c]] = c;
      }
    }
    // Degenerate triangles take the frame the same welded vertex has in a good triangle.
    if (firstGood !== null) {
      for (let t = 0; t < triangleCount; t++) {
        if (!(flags[t] & DEGENERATE)) continue;
        for (let i = 0; i < 3; i++) {
          const c = t * 3 + i;
          const src = firstGood[wi[c]];
          if (src !== NONE) {
            cornerGroup[c] = cornerGroup[src];
            undefinedCorner[c] = undefinedCorner[src];
          } else {
            cornerGroup[c] = newFallbackFrame(store, arena, normals, wi[c]);
            undefinedCorner[c] = 1;
            fallbackCorners++;
          }
        }
      }
    }
  }
  return {
    frames: store.data.subarray(0, store.count * 4),
    frameCount: store.count,
    degenerateUvTriangles: degenerateUv,
    mirroredTriangles: mirrored,
    fallbackCorners,
    weldedVertices,
  };
}

/** Unsigned UV area of triangle t (welded corners). */
function uvArea(uvs: Float32Array, wi: Uint32Array, t: number, vSign: number): number {
  const a = wi[t * 3], b = wi[t * 3 + 1], c = wi[t * 3 + 2];
  const u0 = uvs[a * 2], v0 = uvs[a * 2 + 1];
  const t21x = uvs[b * 2] - u0, t21y = vSign * (uvs[b * 2 + 1] - v0);
  const t31x = uvs[c * 2] - u0, t31y = vSign * (uvs[c * 2 + 1] - v0);
  return Math.abs(t21x * t31y - t21y * t31x) * 0.5;
}

/** Rows of the edge table longer than this are sorted and bisected instead of scanned. */
const LONG_ROW = 32;

/** The corner after corner c in its triangle. */
function nextCorner(c: number): number {
  return c % 3 < 2 ? c + 1 : c - 2;
}

/**
 * Pairs directed edges a->b with b->a of another triangle: returns, per corner c (edge from
 * corner c to the next corner), the neighbouring triangle or NONE. Degenerate triangles take
 * no part. Outgoing edges are kept as compressed sparse rows per welded vertex.
 */
function buildNeighbours(arena: Arena, wi: Uint32Array, flags: Uint8Array, triangleCount: number, vertexCount: number): Uint32Array {
  const cornerCount = triangleCount * 3;
  const start = arena.u32(SLOT_ADJ_START, vertexCount + 1, 0);
  for (let t = 0; t < triangleCount; t++) {
    if (flags[t] & DEGENERATE) continue;
    start[wi[t * 3] + 1]++; start[wi[t * 3 + 1] + 1]++; start[wi[t * 3 + 2] + 1]++;
  }
  for (let v = 0; v < vertexCount; v++) start[v + 1] += start[v];
  const fill = arena.u32(SLOT_ADJ_FILL, vertexCount);
  fill.set(start.subarray(0, vertexCount));
  // Per row entry: the corner, and beside it the edge's target vertex, so a row is searched
  // without loading the corners' triangles.
  const edges = arena.u32(SLOT_ADJ_EDGES, start[vertexCount]);
  const targets = arena.u32(SLOT_ADJ_TARGETS, start[vertexCount]);
  for (let t = 0; t < triangleCount; t++) {
    if (flags[t] & DEGENERATE) continue;
    const v0 = wi[t * 3], v1 = wi[t * 3 + 1], v2 = wi[t * 3 + 2];
    let k = fill[v0]++;
    edges[k] = t * 3; targets[k] = v1;
    k = fill[v1]++;
    edges[k] = t * 3 + 1; targets[k] = v2;
    k = fill[v2]++;
    edges[k] = t * 3 + 2; targets[k] = v0;
  }
  // Rows longer than LONG_ROW (a vertex shared by many triangles, as at the centre of a
  // large fan) are sorted by target vertex, then corner, and searched by bisection, so no
  // vertex costs more than O(k log k) however many triangles meet there.
  for (let v = 0; v < vertexCount; v++) {
    const s0 = start[v], s1 = start[v + 1];
    if (s1 - s0 <= LONG_ROW) continue;
    const row = Array.from(edges.subarray(s0, s1));
    row.sort((x, y) => wi[nextCorner(x)] - wi[nextCorner(y)] || x - y);
    edges.set(row, s0);
    for (let k = s0; k < s1; k++) targets[k] = wi[nextCorner(edges[k])];
  }
  const neighbour = arena.u32(SLOT_NEIGHBOUR, cornerCount, NONE);
  for (let t = 0; t < triangleCount; t++) {
    if (flags[t] & DEGENERATE) continue;
    // Corners of later triangles start here (a corner e belongs to a triangle after t iff e >= later).
    const later = t * 3 + 3;
    for (let i = 0; i < 3; i++) {
      const c = t * 3 + i;
      if (neighbour[c] !== NONE) continue;
      const a = wi[c], b = wi[i < 2 ? c + 1 : c - 2];
      const end = start[b + 1];
      let k = start[b];
      const sorted = end - k > LONG_ROW;
      if (sorted) {
        // First entry whose target is >= a.
        let hi = end;
        while (k < hi) {
          const mid = (k + hi) >>> 1;
          if (targets[mid] < a) k = mid + 1; else hi = mid;
        }
      }
      for (; k < end; k++) {
        if (targets[k] !== a) {
          if (sorted) break; // sorted row: past the run of target a
          continue;
        }
        const e = edges[k];
        if (e < later || neighbour[e] !== NONE) continue;
        neighbour[c] = (e / 3) | 0;
        neighbour[e] = t;
        break;
      }
    }
  }
  return neighbour;
}
