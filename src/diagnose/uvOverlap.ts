/**
 * Based on: the separating axis theorem for convex polygons (two convex polygons have disjoint
 * interiors exactly when the normal of one of their edges separates their projections) and a
 * uniform grid for the broad phase, each candidate pair tested once, in the cell holding the
 * lower-left corner of the intersection of the two bounding boxes. Both as in C. Ericson,
 * "Real-Time Collision Detection" (2005), chapters on primitive tests and spatial
 * partitioning (cited from memory).
 */
import {
  SLOT_OVERLAP_BOX, SLOT_OVERLAP_CELLS, SLOT_OVERLAP_CLASS, SLOT_OVERLAP_ENTRIES, SLOT_OVERLAP_FLAGS,
  SLOT_OVERLAP_HASH, SLOT_OVERLAP_LIVE, SLOT_OVERLAP_ORDER, SLOT_OVERLAP_TABLE, SLOT_OVERLAP_USABLE,
  SLOT_SHELL_AREA, SLOT_SHELL_HASH_A, SLOT_SHELL_HASH_B, SLOT_SHELL_OF, SLOT_SHELL_PARENT, SLOT_SHELL_POINTS, SLOT_SHELL_SEEN,
  SLOT_SHELL_USABLE, SLOT_OVERLAP_POINT_HASH,
  threadArena, type Arena,
} from '../mesh/arena.js';
import { assert } from '../mesh/errors.js';
import { UV_DEGENERATE_RELATIVE, UV_OVERLAP_ABSOLUTE, UV_OVERLAP_RELATIVE, UV_SHELL_AREA_RELATIVE } from '../mesh/tolerances.js';
import { findingFromMarks, type Finding } from './finding.js';

/** Most grid cells the broad phase uses, whatever the mesh (16 MiB of cell offsets). */
const MAX_GRID_CELLS = 1 << 22;
/** Cells per usable triangle the grid may have at most (a sparse atlas gets coarser cells). */
const CELLS_PER_TRIANGLE = 4;
/** Cell entries per usable triangle before the cells are made coarser (guards against a few huge triangles). */
const ENTRIES_PER_TRIANGLE = 16;
/** Triangles sampled to place the grid and scale its cells. */
const MAX_SAMPLES = 65536;
/** Fraction of sampled box corners left outside the grid on each side (stray UVs). */
const TRIM = 0.01;
/** Extents above this multiple of the median extent count as this multiple when averaging. */
const EXTENT_CLIP = 16;

/** How the broad phase of findUvOverlaps went (for tests and benchmarks). */
export interface UvOverlapStats {
  /** Grid cells along u and along v. */
  cellsU: number;
  cellsV: number;
  /** Triangles entered into the grid (finite, non-degenerate UVs). */
  gridTriangles: number;
  /**
   * Pairs of triangles the broad phase looked at in the grid's cells (its own work; pairs of two marked triangles, and
   * pairs that belong to another cell, are not visited).
   */
  cellPairs: number;
  /** Candidate pairs given to the exact triangle-triangle test. */
  exactTests: number;
}

/**
 * Finds the triangles of one UV set that overlap another triangle of the same set in UV space
 * with positive area (a baked map cannot hold two values at one texel).
 * - Touching is not overlap: triangles sharing an edge or a vertex, or penetrating each other
 *   by no more than `layout.touching` UV units (default UV_OVERLAP_ABSOLUTE; uvOverlapAbsolute
 *   gives the value for a quantized TEXCOORD) or UV_OVERLAP_RELATIVE of the smaller triangle's extent
 *   along the separating edge normal, are not reported.
 * - Mirroring onto themselves is not overlap: a pair whose two UV triangles coincide exactly
 *   (the same three UV points, bit for bit, in any order) is intentional stacking, as when
 *   the left and right halves of a symmetric model share one set of UVs, and is skipped
 *   (and marked stacked). Exact copies are grouped first (a hash of the three UV points, in any order), so only one triangle of
 *   each group enters the grid and thousands of stacked copies cost linear time; every copy
 *   takes its group's verdict.
 * - Degenerate-UV triangles (UV_DEGENERATE_RELATIVE) and triangles with a NaN or infinite UV
 *   have no area and take no part (they are reported by findDegenerateUvTriangles).
 * Broad phase: a uniform grid over the UV bounding box of the usable triangles, cell size the
 * mean of their bounding-box extents (max of width and height), made coarser while the grid
 * would exceed 4 cells per triangle (at most 2^22 cells) or the bounding boxes would fill more
 * than 16 cell entries per triangle; each pair is tested once. So that stray triangles cannot
 * wreck the grid, its bounds are the 1% and 99% quantiles of the box corners (from a sample
 * of at most 65536 triangles; anything beyond falls into the border cells) and extents above
 * 16 times the median extent are clipped before averaging. This changes only the speed, never
 * the result. Narrow phase: the separating axis test on the six edge normals, in float64 from
 * the float32 UVs, each projection taken relative to the edge's start so shared vertices
 * project to exactly zero. Cost: linear for ordinary atlases; many triangles each spanning
 * much of the atlas make the cells they share quadratic in their number.
 * - Stacked shells are not overlap either: when two overlapping triangles belong to different
 *   shells (sets of usable triangles connected through shared vertex indices) that have the
 *   same UV points and the same UV area (a copy of one shell laid exactly on the other,
 *   mirrored or triangulated differently), the pair is stacking. A pair within one shell is
 *   a fold and stays an overlap.
 * Returns count = triangles involved in at least one partial overlap, and the first MAX_LISTED
 * of their indices, ascending. When `marks` is given (length >= triangleCount), marks[t] is set
 * to 1 for each overlapping triangle and 0 otherwise; when `layout.stacked` is given (same length) it
 * is set to 1 for each triangle lying exactly on another (an exact copy, or a stacked shell's
 * triangle overlapping its twin) and 0 otherwise; when `stats` is given it receives the
 * broad-phase figures. Memory: about 34 bytes per triangle and 4 per vertex plus the cell lists (4 bytes per
 * cell and per cell entry).
 * Preconditions: indices hold 3 * triangleCount entries, each < uvs.length / 2.
 */
export function findUvOverlaps(
  indices: Uint32Array,
  uvs: Float32Array,
  triangleCount: number,
  marks: Uint8Array | null = null,
  stats: UvOverlapStats | null = null,
  layout: UvLayoutOptions = {},
): Finding {
  const stacked = layout.stacked ?? null;
  const degenerate = layout.degenerate ?? null;
  const touching = layout.touching ?? UV_OVERLAP_ABSOLUTE;
  assert(indices.length >= triangleCount * 3, 'indices must hold 3 entries per triangle');
  assert(!marks || marks.length >= triangleCount, 'marks must hold one entry per triangle');
  assert(!stacked || stacked.length >= triangleCount, 'stacked must hold one entry per triangle');
  assert(!degenerate || degenerate.length >= triangleCount, 'degenerate must hold one entry per triangle');
  assert(triangleCount <= TRIANGLE_BITS + 1, 'at most 2^30 triangles');
  const arena = threadArena();
  const flags = marks ?? arena.u8(SLOT_OVERLAP_FLAGS, triangleCount);
  flags.fill(0, 0, triangleCount);
  if (stacked) stacked.fill(0, 0, triangleCount);
  // Per-triangle UV bounding boxes (exact: min/max of float32 values) and usability.
  const box = arena.f32(SLOT_OVERLAP_BOX, triangleCount * 4);
  const usable = arena.u8(SLOT_OVERLAP_USABLE, triangleCount, 0);
  // Per vertex a hash of its UV bits (-0 as 0); per usable triangle a mix of the sum of its
  // three vertices' hashes, for the exact-copy search: the same three points give the same
  // hash in any order.
  const vertexCount = uvs.length >> 1;
  const pointHash = arena.u32(SLOT_OVERLAP_POINT_HASH, vertexCount);
  const words = new Uint32Array(uvs.buffer, uvs.byteOffset, vertexCount * 2);
  for (let v = 0; v < vertexCount; v++) {
    let x = words[v * 2], y = words[v * 2 + 1];
    if (x === 0x80000000) x = 0;
    if (y === 0x80000000) y = 0;
    let h = Math.imul(x ^ 0x811c9dc5, 0x9e3779b1);
    h = Math.imul(h ^ (h >>> 15) ^ y, 0x85ebca6b);
    h = Math.imul(h ^ (h >>> 13), 0xc2b2ae35);
    pointHash[v] = h ^ (h >>> 16);
  }
  const hashOf = arena.u32(SLOT_OVERLAP_HASH, triangleCount);
  let usableCount = 0;
  for (let t = 0; t < triangleCount; t++) {
    const j0 = indices[t * 3], j1 = indices[t * 3 + 1], j2 = indices[t * 3 + 2];
    const i0 = j0 * 2, i1 = j1 * 2, i2 = j2 * 2;
    const u0 = uvs[i0], v0 = uvs[i0 + 1], u1 = uvs[i1], v1 = uvs[i1 + 1], u2 = uvs[i2], v2 = uvs[i2 + 1];
    if (degenerate) degenerate[t] = 1;
    // x - x is 0 for finite x, NaN for NaN and +-Infinity.
    if (u0 - u0 !== 0 || v0 - v0 !== 0 || u1 - u1 !== 0 || v1 - v1 !== 0 || u2 - u2 !== 0 || v2 - v2 !== 0) continue;
    const du1 = u1 - u0, dv1 = v1 - v0, du2 = u2 - u0, dv2 = v2 - v0;
    const det = du1 * dv2 - du2 * dv1;
    if (!(Math.abs(det) > UV_DEGENERATE_RELATIVE * (du1 * du1 + dv1 * dv1 + du2 * du2 + dv2 * dv2))) continue;
    if (degenerate) degenerate[t] = 0;
    // Final mix, so every bit (the buckets' top bits, the tables' low bits) depends on every point.
    let h = (pointHash[j0] + pointHash[j1] + pointHash[j2]) | 0;
    h = Math.imul(h ^ (h >>> 16), 0x85ebca6b);
    h = Math.imul(h ^ (h >>> 13), 0xc2b2ae35);
    hashOf[t] = h ^ (h >>> 16);
    let bu0 = u0 < u1 ? u0 : u1, bu1 = u0 < u1 ? u1 : u0;
    if (u2 < bu0) bu0 = u2; else if (u2 > bu1) bu1 = u2;
    let bv0 = v0 < v1 ? v0 : v1, bv1 = v0 < v1 ? v1 : v0;
    if (v2 < bv0) bv0 = v2; else if (v2 > bv1) bv1 = v2;
    box[t * 4] = bu0; box[t * 4 + 1] = bv0; box[t * 4 + 2] = bu1; box[t * 4 + 3] = bv1;
    usable[t] = 1;
    usableCount++;
  }
  // Stacked copies (instanced cards, shared mirror halves): a triangle whose three UV points
  // coincide with an earlier usable triangle's joins that triangle's class and stays out of
  // the grid; pairs within a class are intentional stacking, and every copy takes its class's
  // verdict at the end. This keeps thousands of stacked copies from filling one cell.
  const classOf = arena.u32(SLOT_OVERLAP_CLASS, triangleCount);
  const copies = stackedClasses(classOf, arena, indices, uvs, usable, hashOf, triangleCount, usableCount);
  // Shells and their keys (UV point hash and area) over the usable triangles, copies included:
  // made the first time an overlapping pair needs them (a layout without overlaps never does).
  const shell: LazyShells = { keys: null, arena, indices, uvs, usable, classOf, triangleCount };
  if (copies > 0) {
    for (let t = 0; t < triangleCount; t++) {
      if (usable[t] && classOf[t] !== t) {
        usable[t] = 0;
        if (stacked) { stacked[t] = 1; stacked[classOf[t]] = 1; }
      }
    }
  }
  usableCount -= copies;
  if (stats) { stats.cellsU = 0; stats.cellsV = 0; stats.gridTriangles = usableCount; stats.cellPairs = 0; stats.exactTests = 0; }
  if (usableCount < 2) return findingFromMarks(flags, triangleCount);

  // Robust grid bounds and extent scale from an evenly strided sample of the usable triangles:
  // the grid spans the TRIM..1-TRIM quantiles of the box corners (coordinates outside clamp
  // into the border cells, so stray UVs far away cannot stretch the cells), and extents are
  // clipped at EXTENT_CLIP times the median before averaging.
  const stride = Math.ceil(usableCount / MAX_SAMPLES);
  const sampleCount = Math.ceil(usableCount / stride);
  const sMinU = new Float64Array(sampleCount), sMinV = new Float64Array(sampleCount);
  const sMaxU = new Float64Array(sampleCount), sMaxV = new Float64Array(sampleCount);
  const sExtent = new Float64Array(sampleCount);
  for (let t = 0, skip = 0, n = 0; t < triangleCount; t++) {
    if (!usable[t]) continue;
    if (skip > 0) { skip--; continue; }
    skip = stride - 1;
    const w = box[t * 4 + 2] - box[t * 4], h = box[t * 4 + 3] - box[t * 4 + 1];
    sMinU[n] = box[t * 4]; sMinV[n] = box[t * 4 + 1]; sMaxU[n] = box[t * 4 + 2]; sMaxV[n] = box[t * 4 + 3];
    sExtent[n++] = w > h ? w : h;
  }
  // Order statistics by selection (linear) rather than sorting: the same values.
  const lowRank = Math.floor(TRIM * sampleCount), highRank = sampleCount - 1 - lowRank;
  const minU = selectRank(sMinU, lowRank), minV = selectRank(sMinV, lowRank);
  const maxU = selectRank(sMaxU, highRank), maxV = selectRank(sMaxV, highRank);
  const clip = EXTENT_CLIP * selectRank(sExtent, sampleCount >> 1);
  let extentSum = 0;
  for (let t = 0; t < triangleCount; t++) {
    if (!usable[t]) continue;
    const w = box[t * 4 + 2] - box[t * 4], h = box[t * 4 + 3] - box[t * 4 + 1];
    const e = w > h ? w : h;
    extentSum += e < clip ? e : clip;
  }

  // Grid size: mean extent, coarser while there are too many cells or too many entries.
  const width = maxU - minU, height = maxV - minV;
  const maxCells = Math.min(MAX_GRID_CELLS, CELLS_PER_TRIANGLE * usableCount + 16);
  const maxEntries = ENTRIES_PER_TRIANGLE * usableCount;
  let cell = extentSum / usableCount;
  let nu = 1, nv = 1, inv = 1, entryCount = 0;
  // Per cell its entry count at cellStart[c + 1], from the pass that sizes the grid.
  let cellStart = arena.u32(SLOT_OVERLAP_CELLS, 0);
  for (;;) {
    nu = Math.max(1, Math.ceil(width / cell));
    nv = Math.max(1, Math.ceil(height / cell));
    if (nu * nv > maxCells) {
      cell *= Math.max(1.0625, Math.sqrt((nu * nv) / maxCells));
      continue;
    }
    inv = 1 / cell;
    entryCount = 0;
    cellStart = arena.u32(SLOT_OVERLAP_CELLS, nu * nv + 1, 0);
    for (let t = 0; t < triangleCount && entryCount <= maxEntries; t++) {
      if (!usable[t]) continue;
      const cu0 = cellOf(box[t * 4], minU, inv, nu), cu1 = cellOf(box[t * 4 + 2], minU, inv, nu);
      const cv0 = cellOf(box[t * 4 + 1], minV, inv, nv), cv1 = cellOf(box[t * 4 + 3], minV, inv, nv);
      entryCount += (cu1 - cu0 + 1) * (cv1 - cv0 + 1);
      for (let cv = cv0; cv <= cv1; cv++) for (let cu = cu0; cu <= cu1; cu++) cellStart[cv * nu + cu + 1]++;
    }
    // A single cell holds each usable triangle once, so this ends.
    if (entryCount <= maxEntries || (nu === 1 && nv === 1)) break;
    cell *= 2;
  }
  const cellCount = nu * nv;

  // Cell lists in compressed rows: prefix sums of the counts, fill. Each entry is its triangle
  // and where the triangle starts (HERE_U, HERE_V; the cell ranges are made again from the
  // boxes rather than kept per triangle).
  for (let c = 0; c < cellCount; c++) cellStart[c + 1] += cellStart[c];
  const entryTotal = cellStart[cellCount];
  const entries = arena.u32(SLOT_OVERLAP_ENTRIES, entryTotal);
  // Filled from the back: cellStart[c + 1], the end of cell c, counts down to its start as the
  // triangles are taken in descending order (so each cell lists them ascending); the starts
  // then move down one place.
  for (let t = triangleCount - 1; t >= 0; t--) {
    if (!usable[t]) continue;
    const bu0 = box[t * 4], bv0 = box[t * 4 + 1], bu1 = box[t * 4 + 2], bv1 = box[t * 4 + 3];
    const cu0 = cellOf(bu0, minU, inv, nu), cu1 = cellOf(bu1, minU, inv, nu);
    const cv0 = cellOf(bv0, minV, inv, nv), cv1 = cellOf(bv1, minV, inv, nv);
    for (let cv = cv0; cv <= cv1; cv++) {
      for (let cu = cu0; cu <= cu1; cu++) {
        const pos = --cellStart[cv * nu + cu + 1];
        entries[pos] = t + (cu === cu0 ? HERE_U : 0) + (cv === cv0 ? HERE_V : 0);
      }
    }
  }
  cellStart.copyWithin(0, 1, cellCount + 1);
  cellStart[cellCount] = entryTotal;

  // Pairs within each cell; a pair is tested only in the cell of the lower-left corner of
  // the intersection of its bounding boxes, so once over the whole grid. That corner's cell
  // is (max of the two first cells along u, max along v), as cellOf is monotonic, and a
  // triangle's first cell is never past the cell it is met in, so the test is "one of the two
  // starts here" on each axis: one bit test on the two entries (their start bits), made
  // before the boxes are read. A pair of two triangles already known to overlap something
  // teaches nothing, so for an already-marked triangle only the cell's still-unmarked later
  // entries are visited: `live` holds them, compacted as they get marked. Near-stacked copies
  // (offset by a little, so not exact copies) all mark each other in the first pass, and the
  // cell then costs its length, not its square.
  const counts = pairsInCells(arena, cellStart, cellCount, entries, box, flags, indices, uvs, touching, shell, stacked);
  const cellPairs = counts[0], exactTests = counts[1];
  if (stats) { stats.cellsU = nu; stats.cellsV = nv; stats.cellPairs = cellPairs; stats.exactTests = exactTests; }
  if (copies > 0) {
    for (let t = 0; t < triangleCount; t++) {
      if (classOf[t] === t) continue;
      flags[t] = flags[classOf[t]];
      if (stacked) stacked[t] = stacked[classOf[t]];
    }
  }
  return findingFromMarks(flags, triangleCount);
}

/**
 * Bits above the triangle number in a cell entry: HERE_U when the triangle's first cell along u
 * is this cell's column, HERE_V when its first cell along v is this cell's row.
 */
const HERE_U = 0x40000000;
const HERE_V = 0x80000000;
/** The triangle number of a cell entry. */
const TRIANGLE_BITS = 0x3fffffff;

/**
 * The pair search of findUvOverlaps over the filled cells (see there): tests each candidate
 * pair once, in cell order, and marks `flags` (and `stacked`). Returns [pairs looked at, exact tests].
 */
function pairsInCells(
  arena: Arena, cellStart: Uint32Array, cellCount: number, entries: Uint32Array, box: Float32Array,
  flags: Uint8Array, indices: Uint32Array, uvs: Float32Array, touching: number, shell: LazyShells, stacked: Uint8Array | null,
): [number, number] {
  let maxRow = 0;
  for (let c = 0; c < cellCount; c++) if (cellStart[c + 1] - cellStart[c] > maxRow) maxRow = cellStart[c + 1] - cellStart[c];
  const live = arena.u32(SLOT_OVERLAP_LIVE, maxRow);
  let exactTests = 0, cellPairs = 0;
  for (let c = 0; c < cellCount; c++) {
    const start = cellStart[c], end = cellStart[c + 1];
    if (end - start < 2) continue;
    let liveN = -1; // live is made at the first marked entry (nothing is compacted before)
    for (let i = start; i < end - 1; i++) {
      const ea = entries[i];
      const a = ea & TRIANGLE_BITS;
      const aMinU = box[a * 4], aMinV = box[a * 4 + 1], aMaxU = box[a * 4 + 2], aMaxV = box[a * 4 + 3];
      let after = i; // entries at positions <= after have been paired with a
      if (flags[a] === 0) {
        for (let j = i + 1; j < end; j++) {
          const eb = entries[j];
          // The pair belongs to this cell when, on each axis, one of the two starts here.
          if ((ea | eb) >>> 30 !== 3) continue;
          cellPairs++;
          const b = eb & TRIANGLE_BITS;
          // Boxes that only touch cannot overlap with positive area.
          if (box[b * 4] >= aMaxU || aMinU >= box[b * 4 + 2] || box[b * 4 + 1] >= aMaxV || aMinV >= box[b * 4 + 3]) continue;
          exactTests += testPair(a, b, flags, indices, uvs, touching, shell, stacked);
          if (flags[a] !== 0) { after = j; break; }
        }
        if (flags[a] === 0) continue;
      }
      // a is marked: only unmarked later entries can still learn something.
      if (liveN < 0) { liveN = 0; for (let q = start; q < end; q++) live[liveN++] = q; }
      let w = 0;
      for (let r = 0; r < liveN; r++) {
        const j = live[r];
        if (j <= i) continue; // behind a: dropped for good
        const eb = entries[j];
        const b = eb & TRIANGLE_BITS;
        if (flags[b] !== 0) continue; // marked: dropped for good
        live[w++] = j;
        if (j <= after) continue;
        if ((ea | eb) >>> 30 !== 3) continue;
        cellPairs++;
        if (box[b * 4] >= aMaxU || aMinU >= box[b * 4 + 2] || box[b * 4 + 1] >= aMaxV || aMinV >= box[b * 4 + 3]) continue;
        exactTests += testPair(a, b, flags, indices, uvs, touching, shell, stacked);
      }
      liveN = w;
    }
  }
  return [cellPairs, exactTests];
}

/** What findUvOverlaps may also do and know besides partial overlaps. */
export interface UvLayoutOptions {
  /** Receives 1 per triangle lying exactly on another (stacked), 0 otherwise (triangleCount entries). */
  stacked?: Uint8Array | null;
  /** Absolute touching tolerance in UV units (default UV_OVERLAP_ABSOLUTE). */
  touching?: number;
  /**
   * Receives 1 per triangle that takes no part for having no UV area (NaN or infinite UVs,
   * or degenerate by UV_DEGENERATE_RELATIVE), 0 otherwise (triangleCount entries): the marks
   * findDegenerateUvTriangles gives with its default epsilon.
   */
  degenerate?: Uint8Array | null;
}

/** The shell keys of one findUvOverlaps call, made on first use (shellsOf). */
interface LazyShells {
  keys: ShellKeys | null;
  arena: Arena;
  indices: Uint32Array;
  uvs: Float32Array;
  /** Usable triangles with the exact copies taken out; a copy t has classOf[t] !== t. */
  usable: Uint8Array;
  classOf: Uint32Array;
  triangleCount: number;
}

/** The shell keys, made the first time they are asked for, over the usable triangles with their copies. */
function shellsOf(l: LazyShells): ShellKeys {
  if (!l.keys) {
    const before = l.arena.u8(SLOT_SHELL_USABLE, l.triangleCount);
    for (let t = 0; t < l.triangleCount; t++) before[t] = l.usable[t] | (l.classOf[t] !== t ? 1 : 0);
    l.keys = shellKeys(l.arena, l.indices, l.uvs, before, l.triangleCount);
  }
  return l.keys;
}

/** Per triangle its shell, and per shell two hashes of its UV points and its UV area. */
interface ShellKeys {
  shellOf: Uint32Array;
  hashA: Uint32Array;
  hashB: Uint32Array;
  points: Uint32Array;
  area: Float64Array;
}

/**
 * Shells of the usable triangles: connected through shared vertex indices (union-find with
 * path halving). Each shell's key: the number of distinct vertices, two order-independent
 * hashes (sums of per-vertex hashes of the UV bits) and the sum of |det| of its triangles, so
 * that two shells with the same UV points and area compare equal whatever their triangulation.
 */
function shellKeys(arena: Arena, indices: Uint32Array, uvs: Float32Array, usable: Uint8Array, triangleCount: number): ShellKeys {
  const vertexCount = uvs.length >> 1;
  const parent = arena.u32(SLOT_SHELL_PARENT, vertexCount);
  for (let v = 0; v < vertexCount; v++) parent[v] = v;
  for (let t = 0; t < triangleCount; t++) {
    if (!usable[t]) continue;
    const r0 = findRoot(parent, indices[t * 3]);
    for (let k = 1; k < 3; k++) {
      const r = findRoot(parent, indices[t * 3 + k]);
      if (r !== r0) parent[r] = r0;
    }
  }
  const shellOf = arena.u32(SLOT_SHELL_OF, triangleCount, 0xffffffff);
  const hashA = arena.u32(SLOT_SHELL_HASH_A, vertexCount, 0), hashB = arena.u32(SLOT_SHELL_HASH_B, vertexCount, 0);
  const points = arena.u32(SLOT_SHELL_POINTS, vertexCount, 0);
  const area = arena.f64(SLOT_SHELL_AREA, vertexCount, 0);
  const seen = arena.u8(SLOT_SHELL_SEEN, vertexCount, 0);
  const bits = new Float32Array(2), words = new Uint32Array(bits.buffer);
  for (let t = 0; t < triangleCount; t++) {
    if (!usable[t]) continue;
    const root = findRoot(parent, indices[t * 3]);
    shellOf[t] = root;
    const i0 = indices[t * 3] * 2, i1 = indices[t * 3 + 1] * 2, i2 = indices[t * 3 + 2] * 2;
    const du1 = uvs[i1] - uvs[i0], dv1 = uvs[i1 + 1] - uvs[i0 + 1], du2 = uvs[i2] - uvs[i0], dv2 = uvs[i2 + 1] - uvs[i0 + 1];
    area[root] += Math.abs(du1 * dv2 - du2 * dv1);
    for (let k = 0; k < 3; k++) {
      const v = indices[t * 3 + k];
      if (seen[v]) continue;
      seen[v] = 1;
      bits[0] = uvs[v * 2] === 0 ? 0 : uvs[v * 2]; // -0 hashes as 0
      bits[1] = uvs[v * 2 + 1] === 0 ? 0 : uvs[v * 2 + 1];
      let a = Math.imul(words[0] ^ 0x811c9dc5, 0x9e3779b1);
      a = Math.imul(a ^ (a >>> 15) ^ words[1], 0x85ebca6b);
      a ^= a >>> 13;
      let b = Math.imul(words[1] ^ 0x27d4eb2f, 0xc2b2ae35);
      b = Math.imul(b ^ (b >>> 16) ^ words[0], 0x165667b1);
      b ^= b >>> 15;
      hashA[root] = (hashA[root] + a) >>> 0;
      hashB[root] = (hashB[root] + b) >>> 0;
      points[root]++;
    }
  }
  return { shellOf, hashA, hashB, points, area };
}

/** The root of x in the union-find forest `parent`, halving the path on the way. */
function findRoot(parent: Uint32Array, x: number): number {
  while (parent[x] !== x) { parent[x] = parent[parent[x]]; x = parent[x]; }
  return x;
}

/**
 * Whether usable triangles a and b lie in different shells with the same key (points, both
 * hashes, and UV areas equal within UV_SHELL_AREA_RELATIVE).
 */
function sameShellKey(k: ShellKeys, a: number, b: number): boolean {
  const sa = k.shellOf[a], sb = k.shellOf[b];
  if (sa === sb) return false;
  if (k.points[sa] !== k.points[sb] || k.hashA[sa] !== k.hashA[sb] || k.hashB[sa] !== k.hashB[sb]) return false;
  const x = k.area[sa], y = k.area[sb];
  return Math.abs(x - y) <= UV_SHELL_AREA_RELATIVE * Math.max(x, y);
}

/**
 * Tests one pair of grid triangles whose boxes overlap and that are met in the cell of the
 * lower-left corner of the boxes' intersection: skipped when their UV points are the same
 * three points; else the exact test, marking both when they overlap (or, when they lie in two
 * stacked shells, marking them stacked instead). Returns 1 when the exact test ran, else 0.
 */
function testPair(
  a: number, b: number, flags: Uint8Array, indices: Uint32Array, uvs: Float32Array,
  touching: number, shell: LazyShells, stacked: Uint8Array | null,
): number {
  const a0 = indices[a * 3] * 2, a1 = indices[a * 3 + 1] * 2, a2 = indices[a * 3 + 2] * 2;
  const au0 = uvs[a0], av0 = uvs[a0 + 1], au1 = uvs[a1], av1 = uvs[a1 + 1], au2 = uvs[a2], av2 = uvs[a2 + 1];
  const b0 = indices[b * 3] * 2, b1 = indices[b * 3 + 1] * 2, b2 = indices[b * 3 + 2] * 2;
  const bu0 = uvs[b0], bv0 = uvs[b0 + 1], bu1 = uvs[b1], bv1 = uvs[b1 + 1], bu2 = uvs[b2], bv2 = uvs[b2 + 1];
  const m0 = hasPoint(au0, av0, bu0, bv0, bu1, bv1, bu2, bv2);
  const m1 = hasPoint(au1, av1, bu0, bv0, bu1, bv1, bu2, bv2);
  const m2 = hasPoint(au2, av2, bu0, bv0, bu1, bv1, bu2, bv2);
  if (m0 && m1 && m2) return 0; // coincident UV triangles: intentional stacking / mirroring
  // Neighbours across a shared UV edge (the usual pair): when the third points lie on opposite
  // sides of it, that edge's normal separates them with depth exactly 0 (shared points project
  // to exactly 0 relative to the edge's start), which is what the full test would find on that
  // axis, so the answer is the same without the other five axes.
  if (m0 ? m1 || m2 : m1 && m2) {
    // A's edge p -> q in A's order, r its third corner.
    let pu = au0, pv = av0, qu = au1, qv = av1, ru = au2, rv = av2;
    if (!m0) { pu = au1; pv = av1; qu = au2; qv = av2; ru = au0; rv = av0; }
    else if (!m1) { pu = au2; pv = av2; qu = au0; qv = av0; ru = au1; rv = av1; }
    // B's corner that is neither p nor q.
    let xu = bu0, xv = bv0;
    if ((bu0 === pu && bv0 === pv) || (bu0 === qu && bv0 === qv)) {
      if ((bu1 === pu && bv1 === pv) || (bu1 === qu && bv1 === qv)) { xu = bu2; xv = bv2; } else { xu = bu1; xv = bv1; }
    }
    const eu = qu - pu, ev = qv - pv;
    const dr = -ev * (ru - pu) + eu * (rv - pv);
    const dx = -ev * (xu - pu) + eu * (xv - pv);
    if ((dr > 0 && dx < 0) || (dr < 0 && dx > 0)) return 1;
  }
  if (trianglesOverlap(au0, av0, au1, av1, au2, av2, bu0, bv0, bu1, bv1, bu2, bv2, touching)) {
    // Two shells with the same UV points and area laid on one another: stacking, not overlap.
    if (sameShellKey(shellsOf(shell), a, b)) {
      if (stacked) { stacked[a] = 1; stacked[b] = 1; }
      return 1;
    }
    flags[a] = 1;
    flags[b] = 1;
  }
  return 1;
}

/** Writes the UV points of triangle t into out[0..5], sorted by u then v. */
function sortedPoints(out: Float64Array, indices: Uint32Array, uvs: Float32Array, t: number): void {
  let a = indices[t * 3] * 2, b = indices[t * 3 + 1] * 2, c = indices[t * 3 + 2] * 2;
  let x: number;
  if (uvs[b] < uvs[a] || (uvs[b] === uvs[a] && uvs[b + 1] < uvs[a + 1])) { x = a; a = b; b = x; }
  if (uvs[c] < uvs[b] || (uvs[c] === uvs[b] && uvs[c + 1] < uvs[b + 1])) { x = b; b = c; c = x; }
  if (uvs[b] < uvs[a] || (uvs[b] === uvs[a] && uvs[b + 1] < uvs[a + 1])) { x = a; a = b; b = x; }
  out[0] = uvs[a]; out[1] = uvs[a + 1]; out[2] = uvs[b]; out[3] = uvs[b + 1]; out[4] = uvs[c]; out[5] = uvs[c + 1];
}

/** log2 of the buckets the exact-copy search sorts triangles into by the top bits of their hash. */
const COPY_BUCKET_BITS = 8;

/**
 * Writes into classOf, for each usable triangle, the first usable triangle with the same three
 * UV points (in any order, compared as numbers so -0 equals 0); itself when it is the first.
 * Other entries are the triangle itself. Returns the number of copies (usable triangles whose
 * class is an earlier triangle). hashOf holds each usable triangle's hash of its three points
 * (equal for equal points in any order, made in findUvOverlaps' box pass); triangles are first sorted into 256
 * buckets by the hash's top bits (a counting sort that keeps triangle order), then each
 * bucket is searched with its own small open-addressing table, which stays in cache where one
 * table over the whole mesh would cost a cache and TLB miss per triangle. Equal points have
 * equal hashes, so they meet in one bucket, in triangle order: the first is the lowest index.
 */
function stackedClasses(
  classOf: Uint32Array, arena: Arena, indices: Uint32Array, uvs: Float32Array, usable: Uint8Array, hashOf: Uint32Array,
  triangleCount: number, usableCount: number,
): number {
  for (let t = 0; t < triangleCount; t++) classOf[t] = t;
  let copies = 0;
  const bucketStart = new Uint32Array((1 << COPY_BUCKET_BITS) + 1);
  const shift = 32 - COPY_BUCKET_BITS;
  const p = new Float64Array(6), q = new Float64Array(6);
  for (let t = 0; t < triangleCount; t++) if (usable[t]) bucketStart[(hashOf[t] >>> shift) + 1]++;
  let largest = 0;
  for (let k = 0; k < 1 << COPY_BUCKET_BITS; k++) {
    if (bucketStart[k + 1] > largest) largest = bucketStart[k + 1];
    bucketStart[k + 1] += bucketStart[k];
  }
  // Bucketed triangles with their hashes side by side (read in order), and the table's slots
  // as (triangle, hash) pairs, so a probe reads one place.
  const order = arena.u32(SLOT_OVERLAP_ORDER, usableCount * 2);
  const cursor = bucketStart.slice(0, 1 << COPY_BUCKET_BITS);
  for (let t = 0; t < triangleCount; t++) {
    if (!usable[t]) continue;
    const h = hashOf[t];
    const o = cursor[h >>> shift]++ * 2;
    order[o] = t; order[o + 1] = h;
  }
  let size = 16;
  while (size < largest * 2) size <<= 1;
  const table = arena.u32(SLOT_OVERLAP_TABLE, size * 2);
  for (let k = 0; k < 1 << COPY_BUCKET_BITS; k++) {
    const s0 = bucketStart[k], s1 = bucketStart[k + 1];
    if (s1 - s0 < 2) continue;
    let tableSize = 16;
    while (tableSize < (s1 - s0) * 2) tableSize <<= 1;
    const mask = tableSize - 1;
    table.fill(0xffffffff, 0, tableSize * 2);
    for (let i = s0; i < s1; i++) {
      const t = order[i * 2], h = order[i * 2 + 1];
      let slot = h & mask;
      for (;;) {
        const r = table[slot * 2];
        if (r === 0xffffffff) { table[slot * 2] = t; table[slot * 2 + 1] = h; break; }
        if (table[slot * 2 + 1] === h) {
          sortedPoints(p, indices, uvs, t);
          sortedPoints(q, indices, uvs, r);
          if (p[0] === q[0] && p[1] === q[1] && p[2] === q[2] && p[3] === q[3] && p[4] === q[4] && p[5] === q[5]) {
            classOf[t] = r;
            copies++;
            break;
          }
        }
        slot = (slot + 1) & mask;
      }
    }
  }
  return copies;
}

/**
 * Whether two UV triangles overlap with positive area beyond the touching tolerances
 * (`touching`, default UV_OVERLAP_ABSOLUTE, and UV_OVERLAP_RELATIVE): no edge normal of
 * either separates them.
 * Exported for tests. Preconditions: both triangles are non-degenerate; values finite.
 */
export function trianglesOverlap(
  au0: number, av0: number, au1: number, av1: number, au2: number, av2: number,
  bu0: number, bv0: number, bu1: number, bv1: number, bu2: number, bv2: number,
  touching: number = UV_OVERLAP_ABSOLUTE,
): boolean {
  return !(
    separates(au0, av0, au1, av1, au2, av2, bu0, bv0, bu1, bv1, bu2, bv2, touching) ||
    separates(au1, av1, au2, av2, au0, av0, bu0, bv0, bu1, bv1, bu2, bv2, touching) ||
    separates(au2, av2, au0, av0, au1, av1, bu0, bv0, bu1, bv1, bu2, bv2, touching) ||
    separates(bu0, bv0, bu1, bv1, bu2, bv2, au0, av0, au1, av1, au2, av2, touching) ||
    separates(bu1, bv1, bu2, bv2, bu0, bv0, au0, av0, au1, av1, au2, av2, touching) ||
    separates(bu2, bv2, bu0, bv0, bu1, bv1, au0, av0, au1, av1, au2, av2, touching)
  );
}

/**
 * Whether the normal of edge p -> q (r being the triangle's third corner) separates the
 * triangle from the triangle (x0,y0),(x1,y1),(x2,y2): the two projections overlap by no more
 * than the touching tolerances. Projections are taken relative to p.
 */
function separates(
  pu: number, pv: number, qu: number, qv: number, ru: number, rv: number,
  x0: number, y0: number, x1: number, y1: number, x2: number, y2: number,
  touching: number,
): boolean {
  const eu = qu - pu, ev = qv - pv;
  const nu = -ev, nv = eu; // unnormalised edge normal
  const dr = nu * (ru - pu) + nv * (rv - pv);
  const d0 = nu * (x0 - pu) + nv * (y0 - pv);
  const d1 = nu * (x1 - pu) + nv * (y1 - pv);
  const d2 = nu * (x2 - pu) + nv * (y2 - pv);
  const aLo = dr < 0 ? dr : 0, aHi = dr < 0 ? 0 : dr;
  let bLo = d0 < d1 ? d0 : d1, bHi = d0 < d1 ? d1 : d0;
  if (d2 < bLo) bLo = d2; else if (d2 > bHi) bHi = d2;
  const depth = (aHi < bHi ? aHi : bHi) - (aLo > bLo ? aLo : bLo);
  if (depth <= 0) return true;
  // Absolute: depth / |n| <= touching, compared squared to avoid the root.
  if (depth * depth <= touching * touching * (eu * eu + ev * ev)) return true;
  const aLen = aHi - aLo, bLen = bHi - bLo;
  return depth <= UV_OVERLAP_RELATIVE * (aLen < bLen ? aLen : bLen);
}

/** Whether (u, v) equals one of the three points exactly. */
function hasPoint(
  u: number, v: number,
  u0: number, v0: number, u1: number, v1: number, u2: number, v2: number,
): boolean {
  return (u === u0 && v === v0) || (u === u1 && v === v1) || (u === u2 && v === v2);
}

/**
 * The value of rank k (0-based) of `a`, as a[k] would be after sorting; reorders `a`.
 * Quickselect with the median of three as pivot (Hoare partition): linear on average, and the
 * median-of-three pivot keeps sorted and reversed samples linear too.
 * Preconditions: 0 <= k < a.length; no NaN.
 */
function selectRank(a: Float64Array, k: number): number {
  let lo = 0, hi = a.length - 1;
  while (hi > lo) {
    const mid = (lo + hi) >>> 1;
    let x = a[lo], y = a[mid], z = a[hi];
    if (y < x) { const s = x; x = y; y = s; }
    if (z < y) { y = z; if (y < x) y = x; }
    const pivot = y;
    let i = lo, j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) { const s = a[i]; a[i] = a[j]; a[j] = s; i++; j--; }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return a[k];
  }
  return a[k];
}

/** Grid cell of coordinate x along one axis: floor((x - origin) * inv), clamped to [0, n - 1]. */
function cellOf(x: number, origin: number, inv: number, n: number): number {
  const f = (x - origin) * inv;
  // floor(f) < 0 exactly when f < 0 and floor(f) >= n exactly when f >= n; between, f | 0 is floor(f) (n <= 2^22).
  return f < 0 ? 0 : f >= n ? n - 1 : f | 0;
}
