/**
 * UV overlap: triangles of one UV set overlapping with positive area. Touching (shared edges
 * and vertices, contact within the tolerance) and exact coincidence (a mirrored or stacked
 * copy) are not overlaps.
 *
 *   4 x 4 unwelded grid in the unit square (32 triangles, cell 0.25, see grids.ts).
 *   Planted: triangle 0 moved from the bottom-left quad to the top-right quad, 0.05 to the
 *   right of triangle 30 (the lower-right half of that quad):
 *
 *     v=1  +-----------+ . .          30 = (0.75,0.75) (1,0.75) (1,1)
 *          |  31    /|  .             0' = (0.80,0.75) (1.05,0.75) (1.05,1)
 *          |     / 30| /.             0' overlaps 30 only (31 lies above u = v,
 *          |  /      |/ 0'            0' below u - 0.05 = v)
 *    v=.75 +-----------+ . .
 *         u=.75       u=1
 */
import { describe, expect, it } from 'vitest';
import { MAX_LISTED } from '../../src/diagnose/finding.js';
import { findUvOverlaps, trianglesOverlap, type UvOverlapStats } from '../../src/diagnose/uvOverlap.js';
import { setTriangleUvs, unweldedGrid, weldedGrid } from './grids.js';

function newStats(): UvOverlapStats {
  return { cellsU: 0, cellsV: 0, gridTriangles: 0, cellPairs: 0, exactTests: 0 };
}

/** Mesh of independent triangles, 6 uv floats each. */
function soup(uvList: number[]): { indices: Uint32Array; uvs: Float32Array; triangleCount: number } {
  const uvs = new Float32Array(uvList);
  const triangleCount = uvs.length / 6;
  const indices = new Uint32Array(triangleCount * 3).map((_, i) => i);
  return { indices, uvs, triangleCount };
}

describe('findUvOverlaps', () => {
  it('finds nothing in clean grids: shared edges and vertices are not overlaps', () => {
    for (const g of [unweldedGrid(4), weldedGrid(7)]) {
      expect(findUvOverlaps(g.indices, g.uvs, g.triangleCount)).toEqual({ count: 0, triangles: [] });
    }
  });

  it('finds exactly a planted partial overlap between two non-adjacent triangles', () => {
    const g = unweldedGrid(4);
    setTriangleUvs(g, 0, [0.8, 0.75, 1.05, 0.75, 1.05, 1]);
    expect(findUvOverlaps(g.indices, g.uvs, g.triangleCount)).toEqual({ count: 2, triangles: [0, 30] });
  });

  it('does not report an exact copy, in either winding (mirroring onto itself)', () => {
    const g = unweldedGrid(4);
    setTriangleUvs(g, 0, [0.75, 0.75, 1, 0.75, 1, 1]); // the same points as triangle 30
    expect(findUvOverlaps(g.indices, g.uvs, g.triangleCount).count).toBe(0);
    setTriangleUvs(g, 0, [1, 1, 0.75, 0.75, 1, 0.75]); // same points, opposite winding (a mirrored copy)
    expect(findUvOverlaps(g.indices, g.uvs, g.triangleCount).count).toBe(0);
  });

  it('does not report a symmetric model whose two halves share UVs, but reports a partial mismatch', () => {
    //  left half: 4 x 4 grid, triangles 0..31; right half: the same UVs, triangles 32..63
    const half = unweldedGrid(4);
    const uvs = new Float32Array(half.uvs.length * 2);
    uvs.set(half.uvs, 0);
    uvs.set(half.uvs, half.uvs.length);
    const indices = new Uint32Array(uvs.length / 2).map((_, i) => i);
    expect(findUvOverlaps(indices, uvs, 64).count).toBe(0);
    // Pull one corner of right-half triangle 32 + 13 toward its centroid: it now lies inside
    // its twin 13 (partial overlap) and still only touches the neighbours along its two kept edges.
    const t = 32 + 13;
    const cu = (uvs[t * 6] + uvs[t * 6 + 2] + uvs[t * 6 + 4]) / 3, cv = (uvs[t * 6 + 1] + uvs[t * 6 + 3] + uvs[t * 6 + 5]) / 3;
    uvs[t * 6 + 4] = (uvs[t * 6 + 4] + cu) / 2;
    uvs[t * 6 + 5] = (uvs[t * 6 + 5] + cv) / 2;
    expect(findUvOverlaps(indices, uvs, 64)).toEqual({ count: 2, triangles: [13, 45] });
  });

  it('finds a small triangle inside a large one, and crossing triangles with no corner inside the other', () => {
    const s = soup([
      0, 0, 4, 0, 0, 4, //            0: large
      1, 1, 1.5, 1, 1, 1.5, //        1: inside 0
      10, 10, 11, 10, 10.5, 10.866, // 2: star of David with 3
      10, 10.577, 11, 10.577, 10.5, 9.711,
      20, 20, 21, 20, 20, 21, //      4: bounding boxes overlap 5, but the diagonal separates them
      21, 21, 20.6, 21, 21, 20.6,
    ]);
    expect(findUvOverlaps(s.indices, s.uvs, s.triangleCount)).toEqual({ count: 4, triangles: [0, 1, 2, 3] });
  });

  it('treats contact within the tolerance as touching, deeper as overlap', () => {
    //  A = (0,0) (L,0) (0,L);  B = (L/2,L/2) (L/2+s,L/2) (L/2,L/2+s) moved by -d along u and v:
    //  B's first corner sits on A's long edge u + v = L for d = 0 and enters A by d * sqrt(2).
    const at = (L: number, s: number, d: number) =>
      soup([0, 0, L, 0, 0, L, L / 2 - d, L / 2 - d, L / 2 + s - d, L / 2 - d, L / 2 - d, L / 2 + s - d]);
    const cases: [number, number, number, number][] = [
      // [L, s, d, expected count]
      [1, 0.5, 0, 0], //          touching at one point
      [1, 0.5, -0.01, 0], //      apart
      [1, 0.5, 1e-4, 2], //       1.4e-4 deep: beyond both tolerances
      [1, 0.5, 0.01, 2],
      // A tiny B: 4.2e-7 deep is within UV_OVERLAP_ABSOLUTE (1e-6) though above
      // UV_OVERLAP_RELATIVE of B's extent (1e-4 * 7e-4); 1.4e-5 deep is an overlap.
      [1, 1e-3, 3e-7, 0],
      [1, 1e-3, 1e-5, 2],
      // Large UVs: 1.4e-5 deep is beyond UV_OVERLAP_ABSOLUTE but within UV_OVERLAP_RELATIVE of
      // B's extent (1e-4 * 35); 1.4e-2 deep is an overlap.
      [100, 50, 1e-5, 0],
      [100, 50, 0.01, 2],
    ];
    for (const [L, sz, d, expected] of cases) {
      const m = at(L, sz, d);
      expect(findUvOverlaps(m.indices, m.uvs, m.triangleCount).count, `L ${L}, s ${sz}, d ${d}`).toBe(expected);
    }
  });

  it('ignores degenerate and non-finite UV triangles', () => {
    const s = soup([
      0, 0, 1, 0, 0, 1, //                  0: real
      0.1, 0.1, 0.2, 0.2, 0.3, 0.3, //      1: colinear, inside 0
      0.2, 0.2, 0.2, 0.2, 0.2, 0.2, //      2: a point, inside 0
      0.1, 0.1, NaN, 0.1, 0.1, 0.3, //      3: NaN
    ]);
    const stats = newStats();
    expect(findUvOverlaps(s.indices, s.uvs, s.triangleCount, null, stats)).toEqual({ count: 0, triangles: [] });
    expect(stats.gridTriangles).toBe(1);
  });

  it('writes marks when asked', () => {
    const g = unweldedGrid(4);
    setTriangleUvs(g, 0, [0.8, 0.75, 1.05, 0.75, 1.05, 1]);
    const marks = new Uint8Array(g.triangleCount).fill(5);
    findUvOverlaps(g.indices, g.uvs, g.triangleCount, marks);
    expect(Array.from(marks).flatMap((m, t) => (m ? [t] : []))).toEqual([0, 30]);
    expect(Array.from(marks).every((m) => m === 0 || m === 1)).toBe(true);
  });

  it('matches an all-pairs search on a random triangle soup', () => {
    // Deterministic soup: 600 triangles of mixed sizes, some exact copies, some sharing an edge.
    let state = 12345;
    const rnd = () => ((state = (Math.imul(state, 1103515245) + 12345) >>> 0) / 4294967296);
    const list: number[] = [];
    for (let t = 0; t < 600; t++) {
      const kind = t % 10;
      if (kind === 7 && t > 0) { // exact copy of the previous triangle, points rotated
        const p = list.slice(-6);
        list.push(p[2], p[3], p[4], p[5], p[0], p[1]);
      } else if (kind === 8) { // shares the previous triangle's first edge, apex mirrored across it
        const p = list.slice(-6);
        list.push(p[2], p[3], p[0], p[1], p[0] + p[2] - p[4], p[1] + p[3] - p[5]);
      } else {
        const size = kind === 0 ? 0.3 : 0.02;
        const u = rnd() * 3, v = rnd() * 3;
        list.push(u, v, u + size * rnd(), v + size * (rnd() - 0.5), u + size * (rnd() - 0.5), v + size * rnd());
      }
    }
    const s = soup(list);
    // All pairs, written out independently of the grid.
    const uv = s.uvs;
    const usable = (t: number) => {
      const du1 = uv[t * 6 + 2] - uv[t * 6], dv1 = uv[t * 6 + 3] - uv[t * 6 + 1];
      const du2 = uv[t * 6 + 4] - uv[t * 6], dv2 = uv[t * 6 + 5] - uv[t * 6 + 1];
      return Math.abs(du1 * dv2 - du2 * dv1) > 1e-7 * (du1 * du1 + dv1 * dv1 + du2 * du2 + dv2 * dv2);
    };
    const keys = Array.from({ length: s.triangleCount }, (_, t) =>
      [0, 1, 2].map((k) => `${uv[t * 6 + k * 2]},${uv[t * 6 + k * 2 + 1]}`).sort().join(';'));
    const expected = new Set<number>();
    for (let a = 0; a < s.triangleCount; a++) {
      if (!usable(a)) continue;
      for (let b = a + 1; b < s.triangleCount; b++) {
        if (!usable(b) || keys[a] === keys[b]) continue;
        const A = Array.from(uv.subarray(a * 6, a * 6 + 6)), B = Array.from(uv.subarray(b * 6, b * 6 + 6));
        if (trianglesOverlap(A[0], A[1], A[2], A[3], A[4], A[5], B[0], B[1], B[2], B[3], B[4], B[5])) {
          expected.add(a);
          expected.add(b);
        }
      }
    }
    const f = findUvOverlaps(s.indices, s.uvs, s.triangleCount);
    expect(expected.size).toBeGreaterThan(10); // the soup does hold overlaps
    expect(f).toEqual({ count: expected.size, triangles: [...expected].sort((x, y) => x - y) });
  });

  it('tests candidate pairs from a grid, not all pairs', () => {
    const g = weldedGrid(100); // 20000 triangles: all pairs would be about 2e8 tests
    const stats = newStats();
    expect(findUvOverlaps(g.indices, g.uvs, g.triangleCount, null, stats).count).toBe(0);
    expect(stats.gridTriangles).toBe(20000);
    expect(stats.cellsU * stats.cellsV).toBeGreaterThan(1000);
    expect(stats.cellPairs).toBeLessThan(20 * 20000);
    // Only the two halves of each quad have overlapping bounding boxes.
    expect(stats.exactTests).toBe(10000);
  });

  it('visits a linear number of pairs for near-stacked copies (offset, so not exact copies)', () => {
    //  An 8 x 8 unwelded grid (128 triangles) copied K times, copy k moved by
    //  (k * 1e-6, k * 0.7e-6): every copy overlaps the same triangle of every other copy, so
    //  each cell holds K times its few triangles. Every triangle overlaps; the pairs visited
    //  must grow with K, not K^2.
    const g = unweldedGrid(8);
    const run = (K: number) => {
      const uvs = new Float32Array(g.uvs.length * K);
      for (let k = 0; k < K; k++) {
        for (let i = 0; i < g.uvs.length; i += 2) {
          uvs[k * g.uvs.length + i] = g.uvs[i] + k * 1e-6;
          uvs[k * g.uvs.length + i + 1] = g.uvs[i + 1] + k * 0.7e-6;
        }
      }
      const triangleCount = g.triangleCount * K;
      const indices = new Uint32Array(triangleCount * 3).map((_, i) => i);
      const stats = newStats();
      const f = findUvOverlaps(indices, uvs, triangleCount, null, stats);
      expect(f.count).toBe(triangleCount);
      expect(stats.gridTriangles).toBe(triangleCount); // none are exact copies
      return stats.cellPairs;
    };
    const p50 = run(50), p200 = run(200);
    // All pairs of one cell's 4 x 200 entries alone would be 320,000.
    expect(p200).toBeLessThan(40 * 128 * 200);
    expect(p200 / p50).toBeLessThan(8); // x4 copies: within 2x of linear
  });

  it('keeps a fine grid when a few stray triangles lie far away', () => {
    //  30 x 30 grid in the unit square (1800 triangles) and 10 + 10 small strays far off on
    //  both sides (up to 1e6 away): without robust bounds the grid would be one cell.
    const g = unweldedGrid(30);
    const strays: number[] = [];
    for (let k = 0; k < 10; k++) {
      const far = 1000 * 10 ** (k % 4) + k;
      strays.push(far, far, far + 0.01, far, far, far + 0.01);
      strays.push(-far, -far, -far + 0.01, -far, -far, -far + 0.01);
    }
    const uvs = new Float32Array(g.uvs.length + strays.length);
    uvs.set(g.uvs, 0);
    uvs.set(strays, g.uvs.length);
    const triangleCount = g.triangleCount + 20;
    const indices = new Uint32Array(triangleCount * 3).map((_, i) => i);
    const stats = newStats();
    expect(findUvOverlaps(indices, uvs, triangleCount, null, stats)).toEqual({ count: 0, triangles: [] });
    expect(stats.cellsU * stats.cellsV).toBeGreaterThan(100);
    // A handful of triangles per cell: far below the 1.6e6 pairs of one cell holding the grid.
    expect(stats.cellPairs).toBeLessThan(20 * 1820);
    expect(stats.exactTests).toBeLessThanOrEqual(1000); // the 900 quad halves and little else
    // Strays that do overlap are still found, wherever they fall.
    // Stray 1800 is (1000,1000) (1000.01,1000) (1000,1000.01); move stray 1801 onto part of it.
    uvs.set([1000.002, 1000.002, 1000.02, 1000.002, 1000.002, 1000.02], g.uvs.length + 6);
    expect(findUvOverlaps(indices, uvs, triangleCount)).toEqual({ count: 2, triangles: [1800, 1801] });
  });

  it('stays correct when a few huge triangles cover a fine grid, and caps the list', () => {
    //  50 huge triangles, all overlapping each other and the 30 x 30 grid (1800 triangles) below
    const g = unweldedGrid(30);
    const uvs = new Float32Array(g.uvs.length + 50 * 6);
    for (let k = 0; k < 50; k++) uvs.set([-1 - k * 0.01, -1, 3, -1 - k * 0.01, -1, 3], k * 6);
    uvs.set(g.uvs, 50 * 6);
    const triangleCount = 50 + g.triangleCount;
    const indices = new Uint32Array(triangleCount * 3).map((_, i) => i);
    const stats = newStats();
    const f = findUvOverlaps(indices, uvs, triangleCount, null, stats);
    expect(f.count).toBe(triangleCount);
    expect(f.triangles).toEqual(Array.from({ length: MAX_LISTED }, (_, i) => i));
    expect(stats.cellsU * stats.cellsV).toBeGreaterThan(1);
  });
});

describe('trianglesOverlap', () => {
  it('is symmetric and independent of winding', () => {
    const A = [0, 0, 1, 0, 0, 1];
    const B = [0.2, 0.2, 0.9, 0.3, 0.3, 0.9];
    const C = [1, 1, 2, 1, 1, 2];
    const f = (p: number[], q: number[]) => trianglesOverlap(p[0], p[1], p[2], p[3], p[4], p[5], q[0], q[1], q[2], q[3], q[4], q[5]);
    const rev = (p: number[]) => [p[4], p[5], p[2], p[3], p[0], p[1]];
    for (const [p, q, expected] of [[A, B, true], [A, C, false], [B, C, false]] as const) {
      expect(f(p, q)).toBe(expected);
      expect(f(q, p)).toBe(expected);
      expect(f(rev(p), q)).toBe(expected);
      expect(f(p, rev(q))).toBe(expected);
    }
  });

  it('keepsStackedCopiesOutOfTheGridAndGivesEveryCopyItsClassVerdict', () => {
    // 2000 stacked copies of one card triangle A (instanced foliage shares its UVs), plus a
    // triangle B that partly overlaps A. Copies of A among themselves are stacking, not
    // overlap; B overlaps every copy, so all 2001 are reported. Only A's first copy and B
    // enter the grid.
    //   A = (0,0) (1,0) (0,1)      B = (0.4,0.4) (1.2,0.4) (0.4,1.2)
    const list: number[] = [];
    for (let i = 0; i < 2000; i++) list.push(...(i % 2 ? [1, 0, 0, 1, 0, 0] : [0, 0, 1, 0, 0, 1]));
    list.push(0.4, 0.4, 1.2, 0.4, 0.4, 1.2);
    const m = soup(list);
    const stats = newStats();
    const f = findUvOverlaps(m.indices, m.uvs, m.triangleCount, null, stats);
    expect(f.count).toBe(2001);
    expect(stats.gridTriangles).toBe(2);
    // Without B nothing overlaps.
    const alone = soup(list.slice(0, 2000 * 6));
    expect(findUvOverlaps(alone.indices, alone.uvs, alone.triangleCount).count).toBe(0);
  });
});
