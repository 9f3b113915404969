// Generated normals: flat (glTF 2.0 spec, 3.7.2.1: missing normals are computed flat) and
// smooth within a crease angle (area-weighted face normals; common practice).
import { describe, expect, it } from 'vitest';
import { generateNormals } from '../../src/mesh/normals.js';

/** Brute-force smooth normal of corner c: area-weighted sum of every face at the same position within the angle. */
function referenceSmooth(indices: Uint32Array, positions: Float32Array, c: number, angleDeg: number): number[] {
  const face = (t: number) => {
    const p = (i: number) => [positions[indices[t * 3 + i] * 3], positions[indices[t * 3 + i] * 3 + 1], positions[indices[t * 3 + i] * 3 + 2]];
    const [a, b, d] = [p(0), p(1), p(2)];
    const e1 = [b[0] - a[0], b[1] - a[1], b[2] - a[2]], e2 = [d[0] - a[0], d[1] - a[1], d[2] - a[2]];
    return [e1[1] * e2[2] - e1[2] * e2[1], e1[2] * e2[0] - e1[0] * e2[2], e1[0] * e2[1] - e1[1] * e2[0]];
  };
  const at = (k: number) => [positions[indices[k] * 3], positions[indices[k] * 3 + 1], positions[indices[k] * 3 + 2]].join();
  const own = face(Math.floor(c / 3));
  const cos = Math.cos((angleDeg * Math.PI) / 180);
  const sum = [0, 0, 0];
  for (let k = 0; k < indices.length; k++) {
    if (at(k) !== at(c)) continue;
    const g = face(Math.floor(k / 3));
    const d = own[0] * g[0] + own[1] * g[1] + own[2] * g[2];
    if (Math.floor(k / 3) !== Math.floor(c / 3) && d < cos * Math.hypot(...own) * Math.hypot(...g)) continue;
    sum[0] += g[0]; sum[1] += g[1]; sum[2] += g[2];
  }
  const l = Math.hypot(...sum);
  return sum.map((x) => x / l);
}

describe('generateNormals', () => {
  it('flatNormalsSplitSharedVertices', () => {
    // Two triangles folded along edge 1-2: shared vertices get one copy per face.
    //   0 (0,0,0)  1 (1,0,0)  2 (0,1,0)  3 (1,1,1)
    const positions = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0, 1, 1, 1]);
    const indices = new Uint32Array([0, 1, 2, 1, 3, 2]);
    const g = generateNormals(indices, positions, 2, 4, 'flat', 60);
    expect(g.sourceVertex.length).toBe(6);
    expect(Array.from(g.normals.subarray(0, 3))).toEqual([0, 0, 1]);
    const n2 = Array.from(g.normals.subarray(g.indices[3] * 3, g.indices[3] * 3 + 3));
    const s = 1 / Math.sqrt(3);
    expect(n2[0]).toBeCloseTo(-s, 6); expect(n2[1]).toBeCloseTo(-s, 6); expect(n2[2]).toBeCloseTo(s, 6);
  });

  it('smoothNormalsAverageWithinTheAngleOnly', () => {
    // The same fold (54.7 degrees between the faces): 30 degrees keeps them apart, 60 merges.
    const positions = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0, 1, 1, 1]);
    const indices = new Uint32Array([0, 1, 2, 1, 3, 2]);
    expect(generateNormals(indices, positions, 2, 4, 'smooth', 30).sourceVertex.length).toBe(6);
    const merged = generateNormals(indices, positions, 2, 4, 'smooth', 60);
    expect(merged.sourceVertex.length).toBe(4);
    for (let c = 0; c < 6; c++) {
      const ref = referenceSmooth(indices, positions, c, 60);
      for (let i = 0; i < 3; i++) expect(merged.normals[merged.indices[c] * 3 + i]).toBeCloseTo(ref[i], 6);
    }
  });

  it('manyFacesAtOnePositionFollowTheRule', () => {
    // 200 unwelded triangles of a wavy cone all meeting at one apex position: every corner's
    // normal equals the brute-force rule, at several crease angles.
    const k = 200;
    const pos: number[] = [], idx: number[] = [];
    for (let i = 0; i < k; i++) {
      const a0 = (i / k) * 2 * Math.PI, a1 = ((i + 1) / k) * 2 * Math.PI;
      const h0 = 0.3 * Math.sin(9 * a0), h1 = 0.3 * Math.sin(9 * a1);
      pos.push(0, 0, 1, Math.cos(a0), Math.sin(a0), h0, Math.cos(a1), Math.sin(a1), h1);
      idx.push(i * 3, i * 3 + 1, i * 3 + 2);
    }
    const positions = new Float32Array(pos), indices = new Uint32Array(idx);
    for (const angle of [5, 20, 60, 150]) {
      const g = generateNormals(indices, positions, k, k * 3, 'smooth', angle);
      for (let t = 0; t < k; t += 7) {
        const ref = referenceSmooth(indices, positions, t * 3, angle);
        for (let i = 0; i < 3; i++) expect(g.normals[g.indices[t * 3] * 3 + i]).toBeCloseTo(ref[i], 5);
      }
    }
  });
});
