/**
 * The one-pass degenerate-geometry and bad-normal check gives what the two separate checks give.
 *
 *   Deterministic soup of 3000 triangles over 1500 vertices with planted problems: repeated
 *   indices, coincident and colinear corners, a NaN position, zero, long, NaN and reversed
 *   normals, and jittered positions (so some face normals vote against their vertices).
 */
import { describe, expect, it } from 'vitest';
import { findBadNormals, findDegenerateGeometryAndBadNormals } from '../../src/diagnose/badNormals.js';
import { UNIT_LENGTH_TOLERANCE, ZERO_LENGTH } from '../../src/mesh/tolerances.js';
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

/** Bad-normal marks as findBadNormals documents them, written out plainly (vote counters per vertex). */
function referenceBadNormals(m: ReturnType<typeof plantedMesh>, halfStep: number): Uint8Array {
  const { indices, positions: p, normals: n } = m;
  const votes = new Array<number>(m.vertexCount).fill(0), away = new Array<number>(m.vertexCount).fill(0);
  for (let t = 0; t < m.triangleCount; t++) {
    const [a, b, c] = [indices[t * 3], indices[t * 3 + 1], indices[t * 3 + 2]];
    const e1 = [p[b * 3] - p[a * 3], p[b * 3 + 1] - p[a * 3 + 1], p[b * 3 + 2] - p[a * 3 + 2]];
    const e2 = [p[c * 3] - p[a * 3], p[c * 3 + 1] - p[a * 3 + 1], p[c * 3 + 2] - p[a * 3 + 2]];
    const f = [e1[1] * e2[2] - e1[2] * e2[1], e1[2] * e2[0] - e1[0] * e2[2], e1[0] * e2[1] - e1[1] * e2[0]];
    const f2 = f[0] * f[0] + f[1] * f[1] + f[2] * f[2];
    if (!Number.isFinite(f2) || !(f2 > 0)) continue;
    const bound = 2 * Math.sqrt(3) * halfStep * (Math.hypot(e1[0], e1[1], e1[2]) + Math.hypot(e2[0], e2[1], e2[2]));
    if (halfStep > 0 && f2 <= bound * bound) continue;
    for (const v of [a, b, c]) {
      votes[v]++;
      if (n[v * 3] * f[0] + n[v * 3 + 1] * f[1] + n[v * 3 + 2] * f[2] < 0) away[v]++;
    }
  }
  const marks = new Uint8Array(m.vertexCount);
  for (let v = 0; v < m.vertexCount; v++) {
    const len = Math.sqrt(n[v * 3] ** 2 + n[v * 3 + 1] ** 2 + n[v * 3 + 2] ** 2);
    const zero = len <= ZERO_LENGTH;
    const nonUnit = !zero && !(Math.abs(len - 1) <= UNIT_LENGTH_TOLERANCE);
    const flipped = !zero && Number.isFinite(len) && away[v] * 2 > votes[v];
    marks[v] = zero || nonUnit || flipped ? 1 : 0;
  }
  return marks;
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
      const reference = referenceBadNormals(m, halfStep);
      expect(badMarks).toEqual(reference);
      expect(fused.badNormals.count).toBe(reference.reduce((x, y) => x + y, 0));
    }
  });
});
