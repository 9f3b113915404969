/**
 * The one-pass degenerate-geometry and bad-normal check gives what the two separate checks give.
 *
 *   Deterministic soup of 3000 triangles over 1500 vertices with planted problems: repeated
 *   indices, coincident and colinear corners, a NaN position, zero, long, NaN and reversed
 *   normals, and jittered positions (so some face normals vote against their vertices).
 */
import { describe, expect, it } from 'vitest';
import { findBadNormals, findDegenerateGeometryAndBadNormals } from '../../src/diagnose/badNormals.js';
import { findDegenerateGeometry } from '../../src/diagnose/degenerateGeometry.js';

function plantedMesh(): { indices: Uint32Array; positions: Float32Array; normals: Float32Array; triangleCount: number; vertexCount: number } {
  let state = 777;
  const rnd = () => ((state = (Math.imul(state, 1103515245) + 12345) >>> 0) / 4294967296);
  const vertexCount = 1500, triangleCount = 3000;
  const positions = new Float32Array(vertexCount * 3);
  const normals = new Float32Array(vertexCount * 3);
  for (let v = 0; v < vertexCount; v++) {
    positions[v * 3] = rnd(); positions[v * 3 + 1] = rnd(); positions[v * 3 + 2] = 0.05 * rnd();
    normals[v * 3 + 2] = 1;
    const kind = v % 50;
    if (kind === 1) normals[v * 3 + 2] = 0; // zero
    if (kind === 2) normals[v * 3 + 2] = 1.2; // not unit
    if (kind === 3) normals[v * 3 + 2] = -1; // reversed
    if (kind === 4) normals[v * 3] = NaN;
  }
  positions[7 * 3] = NaN;
  // Vertices 10..12 colinear, 13 and 14 coincident.
  positions.set([0, 0, 0, 0.5, 0.5, 0, 1, 1, 0], 10 * 3);
  positions.set([0.3, 0.3, 0, 0.3, 0.3, 0], 13 * 3);
  const indices = new Uint32Array(triangleCount * 3);
  for (let t = 0; t < triangleCount; t++) {
    for (let k = 0; k < 3; k++) indices[t * 3 + k] = Math.floor(rnd() * vertexCount);
  }
  indices.set([5, 5, 6], 0); // repeated index
  indices.set([10, 11, 12], 3); // colinear
  indices.set([13, 14, 20], 6); // coincident corners
  indices.set([7, 8, 9], 9); // NaN position
  return { indices, positions, normals, triangleCount, vertexCount };
}

describe('findDegenerateGeometryAndBadNormals', () => {
  it('matches findDegenerateGeometry and findBadNormals, counts and marks', () => {
    const m = plantedMesh();
    for (const halfStep of [0, 1e-3]) {
      const degenerateMarks = new Uint8Array(m.triangleCount).fill(7), badMarks = new Uint8Array(m.vertexCount).fill(7);
      const fused = findDegenerateGeometryAndBadNormals(m.indices, m.positions, m.normals, m.triangleCount, m.vertexCount, undefined, halfStep, degenerateMarks, badMarks);
      const soloDegenerate = new Uint8Array(m.triangleCount), soloBad = new Uint8Array(m.vertexCount);
      const degenerate = findDegenerateGeometry(m.indices, m.positions, m.triangleCount, undefined, soloDegenerate);
      const bad = findBadNormals(m.indices, m.positions, m.normals, m.triangleCount, m.vertexCount, undefined, halfStep, soloBad);
      expect(degenerate.count).toBeGreaterThanOrEqual(4); // the planted ones at least
      expect(bad.flipped).toBeGreaterThan(0);
      expect(bad.zero).toBeGreaterThan(0);
      expect(fused.degenerate).toEqual(degenerate);
      expect(fused.badNormals).toEqual(bad);
      expect(degenerateMarks).toEqual(soloDegenerate);
      expect(badMarks).toEqual(soloBad);
    }
  });
});
