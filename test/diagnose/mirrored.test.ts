/**
 * Mirrored triangles (negative UV orientation, measured with v upward) and the vertices a
 * frame solve splits along mirror seams.
 *
 *   2 x 2 unwelded grid (8 triangles); u mirrored (u -> 1 - u) on triangles 1 and 6,
 *   triangle 3 made degenerate (all UVs at one point):
 *     +----+----+
 *     | 5 /| 7 /|
 *     | / 4| / 6|  <- 6 mirrored
 *     +----+----+
 *     | 1 /| 3 /|  <- 1 mirrored, 3 degenerate
 *     | / 0| / 2|
 *     +----+----+
 */
import { describe, expect, it } from 'vitest';
import { countMirroredTriangles, countMirrorSeamSplits, markMirroredTriangles } from '../../src/diagnose/mirrored.js';
import { computeFrames } from '../../src/frames/computeFrames.js';
import { unweldedGrid } from './grids.js';

function plantedGrid() {
  const g = unweldedGrid(2);
  for (const t of [1, 6]) for (let k = 0; k < 3; k++) g.uvs[t * 6 + k * 2] = 1 - g.uvs[t * 6 + k * 2];
  for (let k = 0; k < 6; k++) g.uvs[3 * 6 + k] = 0.5;
  return g;
}

describe('countMirroredTriangles', () => {
  it('follows the worked check: plain UVs are mirrored only when v grows downward', () => {
    // Source: METHODS.md worked check (Lengyel 2001): P=(0,0,0),(1,0,0),(0,1,0), uv=(0,0),(1,0),(0,1)
    // gives w=+1 with v upward (bottom-left) and w=-1 read as glTF (top-left); mirrored u flips both.
    const indices = new Uint32Array([0, 1, 2]);
    const plain = new Float32Array([0, 0, 1, 0, 0, 1]);
    const mirroredU = new Float32Array([1, 0, 0, 0, 1, 1]);
    expect(countMirroredTriangles(indices, plain, 1, 1)).toBe(0);
    expect(countMirroredTriangles(indices, plain, 1, -1)).toBe(1);
    expect(countMirroredTriangles(indices, mirroredU, 1, 1)).toBe(1);
    expect(countMirroredTriangles(indices, mirroredU, 1, -1)).toBe(0);
  });

  it('finds exactly the planted mirrored triangles and leaves the degenerate one out', () => {
    const g = plantedGrid();
    const marks = new Uint8Array(g.triangleCount);
    expect(markMirroredTriangles(marks, g.indices, g.uvs, g.triangleCount, 1)).toBe(2);
    expect(Array.from(marks)).toEqual([0, 1, 0, 0, 0, 0, 1, 0]);
    // With v downward every other non-degenerate triangle is the mirrored one.
    expect(markMirroredTriangles(marks, g.indices, g.uvs, g.triangleCount, -1)).toBe(5);
    expect(Array.from(marks)).toEqual([1, 0, 1, 0, 1, 1, 0, 1]);
    expect(countMirroredTriangles(g.indices, g.uvs, g.triangleCount, 1)).toBe(2);
  });

  it('agrees with the count the frame solve reports', () => {
    const g = plantedGrid();
    for (const uvOrigin of ['bottom-left', 'top-left'] as const) {
      const r = computeFrames(g, { method: 'lengyel', uvOrigin });
      expect(countMirroredTriangles(g.indices, g.uvs, g.triangleCount, uvOrigin === 'bottom-left' ? 1 : -1))
        .toBe(r.stats.mirroredTriangles);
    }
  });
});

describe('countMirrorSeamSplits', () => {
  it('counts only added vertices whose w differs from the vertex they were split from', () => {
    // Input vertices 0..2; output 3 copies 0 with w flipped, 4 copies 1 with the same w (a
    // direction split), 5 copies 0 with w flipped again, 6 copies 2 with w flipped.
    const sourceVertex = new Uint32Array([0, 1, 2, 0, 1, 0, 2]);
    const tangents = new Float32Array([
      1, 0, 0, 1, 1, 0, 0, -1, 1, 0, 0, 1,
      1, 0, 0, -1, 0, 1, 0, -1, 0, 1, 0, -1, 1, 0, 0, -1,
    ]);
    expect(countMirrorSeamSplits(sourceVertex, tangents, 3)).toBe(3);
    expect(countMirrorSeamSplits(sourceVertex.subarray(0, 3), tangents, 3)).toBe(0);
  });

  it('counts the two seam vertices a mikktspace solve splits on a UV mirror line', () => {
    //        2 (0,1) uv (0,1)
    //       /|\                 A = (0,1,2): uv (0,0),(1,0),(0,1)  orientation +
    //      / | \                B = (0,2,3): uv (0,0),(0,1),(1,0)  orientation - (u = |x|)
    //     3--0--1               vertices 0 and 2 lie on the mirror line x = 0 and are shared
    // (-1,0) (0,0) (1,0)
    // Source: METHODS.md, MikkTSpace step 4: a vertex on a UV mirror line gets one frame per side.
    const positions = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0, -1, 0, 0]);
    const normals = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]);
    const uvs = new Float32Array([0, 0, 1, 0, 0, 1, 1, 0]);
    const indices = new Uint32Array([0, 1, 2, 0, 2, 3]);
    const r = computeFrames({ positions, normals, uvs, indices }, { method: 'mikktspace', uvOrigin: 'bottom-left' });
    expect(r.sourceVertex.length).toBe(6);
    expect(countMirrorSeamSplits(r.sourceVertex, r.tangents, 4)).toBe(2);
    expect(countMirroredTriangles(indices, uvs, 2, 1)).toBe(1);
  });
});
