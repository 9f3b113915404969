/**
 * Degenerate UV triangles: |det| <= epsilon * (|e1|^2 + |e2|^2) in UV space.
 *
 *   4 x 4 unwelded grid (32 triangles, see grids.ts), three planted kinds:
 *     t = 5   all three corners at one UV          *
 *     t = 12  two corners at one UV                *----*
 *     t = 27  three colinear UVs                   *--*--*
 *   everything else keeps its grid UVs (area > 0).
 */
import { describe, expect, it } from 'vitest';
import { findDegenerateUvTriangles } from '../../src/diagnose/degenerateUv.js';
import { MAX_LISTED } from '../../src/diagnose/finding.js';
import { computeFrames } from '../../src/frames/computeFrames.js';
import { UV_DEGENERATE_RELATIVE } from '../../src/mesh/tolerances.js';
import { setTriangleUvs, unweldedGrid, type GridMesh } from './grids.js';

function plantedGrid(): GridMesh {
  const g = unweldedGrid(4);
  setTriangleUvs(g, 5, [0.3, 0.3, 0.3, 0.3, 0.3, 0.3]); // identical
  setTriangleUvs(g, 12, [0.5, 0.5, 0.75, 0.5, 0.5, 0.5]); // two coincident
  setTriangleUvs(g, 27, [0, 0.25, 0.5, 0.5, 1, 0.75]); // colinear, on v = 0.25 + u / 2
  return g;
}

describe('findDegenerateUvTriangles', () => {
  it('finds exactly the planted identical, coincident and colinear UV triangles', () => {
    const g = plantedGrid();
    expect(findDegenerateUvTriangles(g.indices, g.uvs, g.triangleCount)).toEqual({ count: 3, triangles: [5, 12, 27] });
  });

  it('finds nothing in the clean grid', () => {
    const g = unweldedGrid(4);
    expect(findDegenerateUvTriangles(g.indices, g.uvs, g.triangleCount)).toEqual({ count: 0, triangles: [] });
  });

  it('counts a triangle with a NaN or infinite UV as degenerate', () => {
    const g = unweldedGrid(4);
    g.uvs[9 * 6 + 3] = NaN; // triangle 9, corner 1, v
    g.uvs[20 * 6 + 0] = Infinity; // triangle 20, corner 0, u
    expect(findDegenerateUvTriangles(g.indices, g.uvs, g.triangleCount)).toEqual({ count: 2, triangles: [9, 20] });
  });

  it('uses the relative threshold: a thin sliver with a direction passes, a flatter one does not', () => {
    //   (0.5, h)
    //   /      \        det = h, |e1|^2 + |e2|^2 = 1 + 0.25 + h^2
    // (0,0)----(1,0)    h = 1e-5: ratio 8e-6 > 1e-7;  h = 1e-8: ratio 8e-9 <= 1e-7
    const indices = new Uint32Array([0, 1, 2, 3, 4, 5]);
    const uvs = new Float32Array([0, 0, 1, 0, 0.5, 1e-5, 0, 0, 1, 0, 0.5, 1e-8]);
    expect(findDegenerateUvTriangles(indices, uvs, 2)).toEqual({ count: 1, triangles: [1] });
    // A larger epsilon also takes the first sliver (8e-6 <= 1e-5).
    expect(findDegenerateUvTriangles(indices, uvs, 2, 1e-5)).toEqual({ count: 2, triangles: [0, 1] });
    // Scale free: the same shapes 1000 times smaller give the same answer.
    const small = uvs.map((x) => x * 1e-3);
    expect(findDegenerateUvTriangles(indices, small, 2)).toEqual({ count: 1, triangles: [1] });
  });

  it('does not care about orientation (mirrored triangles are not degenerate)', () => {
    const indices = new Uint32Array([0, 1, 2]);
    expect(findDegenerateUvTriangles(indices, new Float32Array([1, 0, 0, 0, 1, 1]), 1).count).toBe(0);
  });

  it('writes per-triangle marks when asked', () => {
    const g = plantedGrid();
    const marks = new Uint8Array(g.triangleCount).fill(7);
    findDegenerateUvTriangles(g.indices, g.uvs, g.triangleCount, UV_DEGENERATE_RELATIVE, marks);
    const marked = [];
    for (let t = 0; t < g.triangleCount; t++) {
      expect(marks[t] === 0 || marks[t] === 1).toBe(true);
      if (marks[t]) marked.push(t);
    }
    expect(marked).toEqual([5, 12, 27]);
  });

  it('agrees with the count the frame solve reports (same definition)', () => {
    const g = plantedGrid();
    for (const method of ['lengyel', 'mikktspace'] as const) {
      const r = computeFrames(g, { method, uvOrigin: 'bottom-left' });
      expect(r.stats.degenerateUvTriangles).toBe(3);
    }
  });

  it('counts all but lists only the first MAX_LISTED triangles', () => {
    const triangleCount = 1500;
    const indices = new Uint32Array(triangleCount * 3);
    for (let i = 0; i < indices.length; i++) indices[i] = i % 3; // every triangle uses vertices 0, 1, 2
    const uvs = new Float32Array([0.5, 0.5, 0.5, 0.5, 0.5, 0.5]); // all at one point
    const f = findDegenerateUvTriangles(indices, uvs, triangleCount);
    expect(f.count).toBe(1500);
    expect(f.triangles.length).toBe(MAX_LISTED);
    expect(f.triangles).toEqual(Array.from({ length: MAX_LISTED }, (_, i) => i));
  });
});
