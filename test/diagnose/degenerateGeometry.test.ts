/**
 * Degenerate geometry: repeated indices, coincident or colinear positions.
 *
 *   3 x 3 unwelded grid (18 triangles), planted:
 *     t = 2   positions colinear        *---*-------*    (0,0,0) (1,1,1) (3,3,3)
 *     t = 7   two coincident corners    *===*---*
 *     t = 11  a NaN position
 *     t = 16  a repeated index          indices (v, v, w)
 *   and a thin but real sliver at t = 4 that must pass.
 */
import { describe, expect, it } from 'vitest';
import { findDegenerateGeometry } from '../../src/diagnose/degenerateGeometry.js';
import { MAX_LISTED } from '../../src/diagnose/finding.js';
import { GEOMETRY_DEGENERATE_RELATIVE } from '../../src/mesh/tolerances.js';
import { setTrianglePositions, unweldedGrid, weldedGrid } from './grids.js';

function plantedGrid() {
  const g = unweldedGrid(3);
  setTrianglePositions(g, 2, [0, 0, 0, 1, 1, 1, 3, 3, 3]);
  setTrianglePositions(g, 7, [1, 2, 0, 1, 2, 0, 2, 2, 0]);
  g.positions[11 * 9 + 4] = NaN;
  g.indices[16 * 3 + 1] = g.indices[16 * 3];
  // Sliver: height 1e-3 over a base of 1 (sine of its smallest angle ~2e-3 >> 1e-10).
  setTrianglePositions(g, 4, [0, 0, 0, 1, 0, 0, 0.5, 0.001, 0]);
  return g;
}

describe('findDegenerateGeometry', () => {
  it('finds exactly the planted colinear, coincident, NaN and repeated-index triangles', () => {
    const g = plantedGrid();
    expect(findDegenerateGeometry(g.indices, g.positions, g.triangleCount)).toEqual({ count: 4, triangles: [2, 7, 11, 16] });
  });

  it('finds nothing in a clean welded grid', () => {
    const g = weldedGrid(5);
    expect(findDegenerateGeometry(g.indices, g.positions, g.triangleCount)).toEqual({ count: 0, triangles: [] });
  });

  it('finds a repeated index even when the positions would have area', () => {
    //  0 --- 1     triangle (0, 1, 1) in a welded grid: two corners share one vertex
    const g = weldedGrid(1);
    g.indices[2] = g.indices[1];
    expect(findDegenerateGeometry(g.indices, g.positions, g.triangleCount)).toEqual({ count: 1, triangles: [0] });
  });

  it('uses the relative threshold: flatter than epsilon is degenerate, whatever the scale', () => {
    //   (0.5, h, 0)
    //   /        \      |cross| = h, |e1|^2 + |e2|^2 = 1.25 + h^2
    // (0,0,0)---(1,0,0)
    const indices = new Uint32Array([0, 1, 2]);
    const tri = (h: number, s: number) => new Float32Array([0, 0, 0, s, 0, 0, 0.5 * s, h * s, 0]);
    expect(findDegenerateGeometry(indices, tri(1e-3, 1), 1).count).toBe(0);
    expect(findDegenerateGeometry(indices, tri(1e-3, 1e4), 1).count).toBe(0);
    expect(findDegenerateGeometry(indices, tri(1e-3, 1), 1, 1e-2).count).toBe(1); // 8e-4 <= 1e-2
    expect(GEOMETRY_DEGENERATE_RELATIVE).toBeLessThan(8e-4);
  });

  it('writes per-triangle marks when asked', () => {
    const g = plantedGrid();
    const marks = new Uint8Array(g.triangleCount).fill(9);
    findDegenerateGeometry(g.indices, g.positions, g.triangleCount, GEOMETRY_DEGENERATE_RELATIVE, marks);
    expect(Array.from(marks).flatMap((m, t) => (m === 1 ? [t] : []))).toEqual([2, 7, 11, 16]);
    expect(Array.from(marks).every((m) => m === 0 || m === 1)).toBe(true);
  });

  it('counts all but lists only the first MAX_LISTED triangles', () => {
    const triangleCount = 1001 + 400;
    const indices = new Uint32Array(triangleCount * 3); // all zero: every triangle is (0, 0, 0)
    const f = findDegenerateGeometry(indices, new Float32Array(3), triangleCount);
    expect(f.count).toBe(triangleCount);
    expect(f.triangles).toEqual(Array.from({ length: MAX_LISTED }, (_, i) => i));
  });
});
