/**
 * The shared finding shape: count plus the first MAX_LISTED indices, ascending, and the
 * diagnostics index re-exporting every check.
 *
 *   marks:  t = 0 1 2 3 4 5 ...
 *               0 1 0 1 1 0        -> count 3, triangles [1, 3, 4]
 */
import { describe, expect, it } from 'vitest';
import { LOCATION_DIGITS, MAX_LISTED, findingFromMarks, locateTriangles, triangleCentroids, vertexFindingFromMarks, vertexPositions } from '../../src/diagnose/finding.js';
import * as diagnose from '../../src/diagnose/index.js';

describe('findingFromMarks', () => {
  it('lists at most 1000 indices, the DESIGN.md report cap', () => {
    // Source: DESIGN.md report schema, "triangles: [first 1000 indices]".
    expect(MAX_LISTED).toBe(1000);
  });

  it('counts every marked triangle and lists the marked indices ascending', () => {
    const marks = new Uint8Array([0, 1, 0, 1, 1, 0]);
    expect(findingFromMarks(marks, 6)).toEqual({ count: 3, triangles: [1, 3, 4] });
  });

  it('reads only the first triangleCount marks', () => {
    const marks = new Uint8Array([1, 0, 1, 1]);
    expect(findingFromMarks(marks, 2)).toEqual({ count: 1, triangles: [0] });
  });

  it('keeps counting past the cap but lists only the first MAX_LISTED', () => {
    const marks = new Uint8Array(2500);
    for (let t = 0; t < 2500; t += 2) marks[t] = 1; // 1250 marked: 0, 2, 4, ...
    const f = findingFromMarks(marks, 2500);
    expect(f.count).toBe(1250);
    expect(f.triangles.length).toBe(MAX_LISTED);
    expect(f.triangles[0]).toBe(0);
    expect(f.triangles[MAX_LISTED - 1]).toBe(2 * (MAX_LISTED - 1));
  });
});

describe('diagnostics index', () => {
  it('re-exports every check', () => {
    for (const name of [
      'findDegenerateUvTriangles', 'findDegenerateGeometry', 'countInvalidVertices', 'markNonFiniteVertices',
      'findBadNormals', 'countMirroredTriangles', 'markMirroredTriangles', 'countMirrorSeamSplits',
      'findUvOverlaps', 'trianglesOverlap', 'compareStoredTangents', 'countInvalidStoredTangents',
      'isStoredTangentSetValid', 'isStoredTangentValid', 'findingFromMarks',
    ]) {
      expect(typeof (diagnose as Record<string, unknown>)[name], name).toBe('function');
    }
    expect(diagnose.MAX_LISTED).toBe(1000);
  });
});

describe('where findings are', () => {
  // Two triangles over four vertices (z = 1 plane), and one with a NaN corner:
  //   3 (0,3) ---- 2 (3,3)        t0 = 0 1 2: centroid (2, 1, 1)
  //   |         / |               t1 = 0 2 3: centroid (1, 2, 1)
  //   0 (0,0) ---- 1 (3,0)        t2 = 0 1 4: vertex 4 has x = NaN -> null
  const positions = new Float32Array([0, 0, 1, 3, 0, 1, 3, 3, 1, 0, 3, 1, NaN, 1, 1]);
  const indices = new Uint32Array([0, 1, 2, 0, 2, 3, 0, 1, 4]);

  it('givesEachListedTriangleItsObjectSpaceCentroid', () => {
    expect(triangleCentroids([1, 0, 2], indices, positions)).toEqual([[1, 2, 1], [2, 1, 1], null]);
  });

  it('roundsCentroidsToSevenSignificantDigits', () => {
    // (0 + 1 + 1) / 3 = 0.6666666666... -> 0.6666667; -0 comes out as 0.
    const p = new Float32Array([0, 0, -0, 1, 0, -0, 1, 1, -0]);
    expect(LOCATION_DIGITS).toBe(7);
    expect(triangleCentroids([0], new Uint32Array([0, 1, 2]), p)).toEqual([[0.6666667, 0.3333333, 0]]);
    expect(Object.is(triangleCentroids([0], new Uint32Array([0, 1, 2]), p)[0]![2], -0)).toBe(false);
  });

  it('addsSourceLinesWhenTheReaderKnowsThem', () => {
    const faceLines = new Uint32Array([12, 12, 40]);
    expect(locateTriangles([0, 2], indices, positions, faceLines)).toEqual({ centroids: [[2, 1, 1], null], lines: [12, 40] });
    expect(locateTriangles([1], indices, positions, null)).toEqual({ centroids: [[1, 2, 1]] });
  });

  it('listsFlaggedVerticesWithTheirPositionsAndTheTrianglesUsingThem', () => {
    // Vertex 3 is used by t1 only; vertex 4 by t2 only; vertex 0 by all three.
    const marks = new Uint8Array([0, 0, 0, 1, 1]);
    expect(vertexFindingFromMarks(marks, 5, indices, 3)).toEqual({ count: 2, vertices: [3, 4], triangleCount: 2, triangles: [1, 2] });
    expect(vertexPositions([3, 4], positions)).toEqual([[0, 3, 1], null]);
    expect(vertexFindingFromMarks(new Uint8Array([1, 0, 0, 0, 0]), 5, indices, 3).triangles).toEqual([0, 1, 2]);
    expect(vertexFindingFromMarks(new Uint8Array(5), 5, indices, 3)).toEqual({ count: 0, vertices: [], triangleCount: 0, triangles: [] });
  });

  it('capsVertexAndTriangleListsAtMaxListed', () => {
    // 1500 separate triangles, every vertex flagged: 4500 vertices, 1500 triangles, 1000 of each listed.
    const n = 1500;
    const idx = Uint32Array.from({ length: n * 3 }, (_, i) => i);
    const f = vertexFindingFromMarks(new Uint8Array(n * 3).fill(1), n * 3, idx, n);
    expect([f.count, f.vertices.length, f.triangleCount, f.triangles.length]).toEqual([4500, MAX_LISTED, 1500, MAX_LISTED]);
    expect(f.vertices[999]).toBe(999);
    expect(f.triangles[999]).toBe(999);
  });
});
