/**
 * Stacked UV shells are notes, not overlaps (DESIGN.md, Report: uvOverlap counts only partial
 * overlaps, stacked shells are counted in stackedShells).
 *
 *   Two unit quads in UV, each its own shell (own four vertices), laid on one another:
 *
 *     (0,1) 3 +-----+ 2 (1,1)      shell A: triangles (0,1,2), (0,2,3)   diagonal 0-2
 *             |   / |              shell B: triangles (4,5,7), (5,6,7)   diagonal 5-7
 *             | /   |              (a mirrored copy triangulated the other way: its
 *     (0,0) 0 +-----+ 1 (1,0)       triangles cross A's, none coincides)
 */
import { describe, expect, it } from 'vitest';
import { findUvOverlaps } from '../../src/diagnose/uvOverlap.js';

const QUAD = [0, 0, 1, 0, 1, 1, 0, 1];

function stackedQuads(secondUvs: number[]): { indices: Uint32Array; uvs: Float32Array; triangleCount: number } {
  const uvs = new Float32Array([...QUAD, ...secondUvs]);
  const indices = new Uint32Array([0, 1, 2, 0, 2, 3, 4, 5, 7, 5, 6, 7]);
  return { indices, uvs, triangleCount: 4 };
}

describe('stacked shells', () => {
  it('aCopyTriangulatedTheOtherWayIsStackedNotOverlapping', () => {
    const m = stackedQuads(QUAD);
    const stacked = new Uint8Array(4);
    const overlap = findUvOverlaps(m.indices, m.uvs, m.triangleCount, null, null, { stacked });
    expect(overlap).toEqual({ count: 0, triangles: [] });
    expect([...stacked]).toEqual([1, 1, 1, 1]);
  });

  it('aMirroredCopyIsStackedToo', () => {
    // Shell B mirrored in u: vertex 4 at (1,0), 5 at (0,0), 6 at (0,1), 7 at (1,1); the same
    // points and area as A, with the other UV orientation.
    const m = stackedQuads([1, 0, 0, 0, 0, 1, 1, 1]);
    const stacked = new Uint8Array(4);
    expect(findUvOverlaps(m.indices, m.uvs, m.triangleCount, null, null, { stacked }).count).toBe(0);
    expect([...stacked]).toEqual([1, 1, 1, 1]);
  });

  it('exactCopiesAreStacked', () => {
    // Two separate triangles on the same three UV points, in another corner order.
    const indices = new Uint32Array([0, 1, 2, 3, 4, 5]);
    const uvs = new Float32Array([0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0, 0]);
    const stacked = new Uint8Array(2);
    expect(findUvOverlaps(indices, uvs, 2, null, null, { stacked }).count).toBe(0);
    expect([...stacked]).toEqual([1, 1]);
  });

  it('aShiftedCopyIsAPartialOverlap', () => {
    // Shell B moved right by 0.5: same shape, other points: it overlaps A partly.
    const m = stackedQuads([0.5, 0, 1.5, 0, 1.5, 1, 0.5, 1]);
    const stacked = new Uint8Array(4);
    const overlap = findUvOverlaps(m.indices, m.uvs, m.triangleCount, null, null, { stacked });
    expect(overlap.count).toBe(4);
    expect([...stacked]).toEqual([0, 0, 0, 0]);
  });

  it('aCopyThatLacksPartOfTheShellIsAPartialOverlap', () => {
    // Shell B holds the same four points but only one triangle (5,6,7): less area than A.
    const uvs = new Float32Array([...QUAD, ...QUAD]);
    const indices = new Uint32Array([0, 1, 2, 0, 2, 3, 5, 6, 7]);
    const stacked = new Uint8Array(3);
    const overlap = findUvOverlaps(indices, uvs, 3, null, null, { stacked });
    expect(overlap.count).toBe(3);
    expect([...stacked]).toEqual([0, 0, 0]);
  });

  it('aFoldWithinOneShellStaysAnOverlap', () => {
    // One shell: triangle (0,1,2) and triangle (0,2,4) with vertex 4 folded back across the
    // shared edge 0-2 to (0.8,0.2), inside the first triangle.
    //   (0,0) 0 --- 1 (1,0), 2 (1,1); 4 at (0.8,0.2) lies below the diagonal 0-2.
    const uvs = new Float32Array([0, 0, 1, 0, 1, 1, 0, 1, 0.8, 0.2]);
    const indices = new Uint32Array([0, 1, 2, 0, 2, 4]);
    const stacked = new Uint8Array(2);
    expect(findUvOverlaps(indices, uvs, 2, null, null, { stacked }).count).toBe(2);
    expect([...stacked]).toEqual([0, 0]);
  });
});
