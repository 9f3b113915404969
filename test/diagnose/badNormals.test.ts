/**
 * Bad normals: zero, non-unit, and pointing away from the faces that use them.
 *
 *   2 x 2 welded grid, vertex (i, j) = 3j + i, all faces +z:
 *     6---7---8        planted:  v0 zero normal
 *     | / | / |                  v2 length 1.1
 *     3---4---5                  v4 (0, 0, -1): away from all six faces
 *     | / | / |                  v8 NaN
 *     0---1---2
 */
import { describe, expect, it } from 'vitest';
import { findBadNormals } from '../../src/diagnose/badNormals.js';
import { UNIT_LENGTH_TOLERANCE } from '../../src/mesh/tolerances.js';
import { weldedGrid } from './grids.js';

function setNormal(normals: Float32Array, v: number, x: number, y: number, z: number): void {
  normals[v * 3] = x; normals[v * 3 + 1] = y; normals[v * 3 + 2] = z;
}

describe('findBadNormals', () => {
  it('finds exactly the planted zero, non-unit, NaN and flipped normals', () => {
    const g = weldedGrid(2);
    setNormal(g.normals, 0, 0, 0, 0);
    setNormal(g.normals, 2, 0, 0, 1.1);
    setNormal(g.normals, 4, 0, 0, -1);
    setNormal(g.normals, 8, NaN, 0, 1);
    expect(findBadNormals(g.indices, g.positions, g.normals, g.triangleCount, g.vertexCount))
      .toEqual({ count: 4, zero: 1, nonUnit: 2, flipped: 1 });
  });

  it('marksTheBadVerticesSoTheReportCanListThem', () => {
    const g = weldedGrid(2);
    setNormal(g.normals, 0, 0, 0, 0);
    setNormal(g.normals, 2, 0, 0, 1.1);
    setNormal(g.normals, 4, 0, 0, -1);
    setNormal(g.normals, 8, NaN, 0, 1);
    const marks = new Uint8Array(g.vertexCount);
    findBadNormals(g.indices, g.positions, g.normals, g.triangleCount, g.vertexCount, UNIT_LENGTH_TOLERANCE, 0, marks);
    expect([...marks.keys()].filter((v) => marks[v])).toEqual([0, 2, 4, 8]);
  });

  it('finds nothing in a clean grid', () => {
    const g = weldedGrid(3);
    expect(findBadNormals(g.indices, g.positions, g.normals, g.triangleCount, g.vertexCount))
      .toEqual({ count: 0, zero: 0, nonUnit: 0, flipped: 0 });
  });

  it('counts a vertex that is both non-unit and flipped once', () => {
    const g = weldedGrid(2);
    setNormal(g.normals, 4, 0, 0, -1.2);
    expect(findBadNormals(g.indices, g.positions, g.normals, g.triangleCount, g.vertexCount))
      .toEqual({ count: 1, zero: 0, nonUnit: 1, flipped: 1 });
  });

  it('applies the unit-length tolerance', () => {
    const g = weldedGrid(1);
    setNormal(g.normals, 0, 0, 0, 1 + 0.8 * UNIT_LENGTH_TOLERANCE);
    setNormal(g.normals, 1, 0, 1 - 0.8 * UNIT_LENGTH_TOLERANCE, 0); // unit-ish but sideways: dot 0, not away
    setNormal(g.normals, 2, 0, 0, 1 + 1.5 * UNIT_LENGTH_TOLERANCE);
    setNormal(g.normals, 3, 0, 0, 1 - 1.5 * UNIT_LENGTH_TOLERANCE);
    expect(findBadNormals(g.indices, g.positions, g.normals, g.triangleCount, g.vertexCount))
      .toEqual({ count: 2, zero: 0, nonUnit: 2, flipped: 0 });
  });

  it('flags a vertex only when MORE than half of its corners face away', () => {
    //        2 (0,1)
    //        |  A: (0,1,2)  face +z
    //  0 ----1 (1,0)
    //  |   /    B: (0,1,3)  face -z
    //  3  4     C: (0,1,4)  face -z
    // (0,-1) (1,-1)          all normals +z
    const positions = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0, 0, -1, 0, 1, -1, 0]);
    const normals = new Float32Array(15);
    for (let v = 0; v < 5; v++) normals[v * 3 + 2] = 1;
    // A and B only: v0 and v1 are away on 1 of 2 corners (not more than half); v3 on 1 of 1.
    const ab = new Uint32Array([0, 1, 2, 0, 1, 3]);
    expect(findBadNormals(ab, positions, normals, 2, 5)).toEqual({ count: 1, zero: 0, nonUnit: 0, flipped: 1 });
    // With C as well: v0 and v1 are away on 2 of 3, v3 and v4 on 1 of 1; v2 faces its face.
    const abc = new Uint32Array([0, 1, 2, 0, 1, 3, 0, 1, 4]);
    expect(findBadNormals(abc, positions, normals, 3, 5)).toEqual({ count: 4, zero: 0, nonUnit: 0, flipped: 4 });
  });

  it('flags every vertex of a clockwise-wound grid with +z normals', () => {
    // Source: glTF 2.0 spec 3.7.4: front faces wind counterclockwise, so reversing every
    // triangle turns the face normals to -z while the stored normals stay +z.
    const g = weldedGrid(3);
    for (let t = 0; t < g.triangleCount; t++) {
      const a = g.indices[t * 3 + 1];
      g.indices[t * 3 + 1] = g.indices[t * 3 + 2];
      g.indices[t * 3 + 2] = a;
    }
    expect(findBadNormals(g.indices, g.positions, g.normals, g.triangleCount, g.vertexCount))
      .toEqual({ count: 16, zero: 0, nonUnit: 0, flipped: 16 });
  });

  it('lets degenerate triangles take no part in the vote, and ignores unused vertices', () => {
    //  0 (0,0) -- 1 (1,0) -- 2 (2,0)   colinear triangle (0,1,2): no face normal
    //  vertex 3 is used by nothing; all normals -z
    const positions = new Float32Array([0, 0, 0, 1, 0, 0, 2, 0, 0, 5, 5, 5]);
    const normals = new Float32Array([0, 0, -1, 0, 0, -1, 0, 0, -1, 0, 0, -1]);
    expect(findBadNormals(new Uint32Array([0, 1, 2]), positions, normals, 1, 4))
      .toEqual({ count: 0, zero: 0, nonUnit: 0, flipped: 0 });
  });
});
