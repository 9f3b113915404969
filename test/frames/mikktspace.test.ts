// Behaviour of the `mikktspace` method on tiny meshes (steps from METHODS.md: welding, groups
// with one orientation, "group with any" triangles, degenerate triangles, quads).
import { describe, expect, it } from 'vitest';
import { computeFrames } from '../../src/frames/computeFrames.js';

const up = (n: number) => new Float32Array(Array.from({ length: n }, () => [0, 0, 1]).flat());

function tangentAtCorner(r: ReturnType<typeof computeFrames>, corner: number): number[] {
  const v = r.indices[corner];
  return Array.from(r.tangents.subarray(v * 4, v * 4 + 4));
}

describe('mikktspace', () => {
  it('weldConnectsDuplicatedVertices', () => {
    // Two triangles sharing the edge 1-2; the skewed UVs give each triangle its own dP/du, so
    // a shared vertex averages both. Written once with shared vertices and once with the edge
    // duplicated bit for bit: welding must make the two identical.
    //   3 ---- 2
    //   |  \   |
    //   0 ---- 1
    const P = [0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0];
    const UV = [0, 0, 1, 0.2, 1.1, 1, 0, 1];
    const shared = computeFrames(
      { positions: new Float32Array(P), normals: up(4), uvs: new Float32Array(UV), indices: new Uint32Array([0, 1, 3, 1, 2, 3]) },
      { uvOrigin: 'bottom-left' },
    );
    const dupP = [...P, ...P.slice(3, 6), ...P.slice(9, 12)];
    const dupUV = [...UV, ...UV.slice(2, 4), ...UV.slice(6, 8)];
    const dup = computeFrames(
      { positions: new Float32Array(dupP), normals: up(6), uvs: new Float32Array(dupUV), indices: new Uint32Array([0, 1, 3, 4, 2, 5]) },
      { uvOrigin: 'bottom-left' },
    );
    for (let c = 0; c < 6; c++) expect(tangentAtCorner(dup, c)).toEqual(tangentAtCorner(shared, c));
    // The shared corner differs from the unshared ones: the average really happened.
    expect(tangentAtCorner(shared, 0)).not.toEqual(tangentAtCorner(shared, 1));
  });

  it('mirroredUvSeamSplitsSharedVertices', () => {
    // A strip of two quads whose right half mirrors u (u = 1 - x): the middle column (1, 4) is
    // shared by both halves and must be split, with w = +1 on the left and -1 on the right.
    //   3 ---- 4 ---- 5      u: 0    1    0
    //   |      |      |
    //   0 ---- 1 ---- 2
    const positions = new Float32Array([0, 0, 0, 1, 0, 0, 2, 0, 0, 0, 1, 0, 1, 1, 0, 2, 1, 0]);
    const uvs = new Float32Array([0, 0, 1, 0, 0, 0, 0, 1, 1, 1, 0, 1]);
    const indices = new Uint32Array([0, 1, 4, 0, 4, 3, 1, 2, 5, 1, 5, 4]);
    const r = computeFrames({ positions, normals: up(6), uvs, indices }, { uvOrigin: 'bottom-left' });
    expect(r.stats.splitVertices).toBe(2);
    expect(r.sourceVertex.length).toBe(8);
    expect(Array.from(r.sourceVertex.subarray(6)).sort()).toEqual([1, 4]);
    expect(r.stats.mirroredTriangles).toBe(2);
    for (let c = 0; c < 6; c++) expect(tangentAtCorner(r, c)).toEqual([1, 0, 0, 1]);
    for (let c = 6; c < 12; c++) expect(tangentAtCorner(r, c)).toEqual([-1, 0, 0, -1]);
  });

  it('degenerateUvTriangleJoinsItsNeighbour', () => {
    // Triangle 1's UVs are collapsed (vertices 1 and 3 share a UV): a "group with any"
    // triangle. It contributes no direction; at vertices 1 and 2 it joins triangle 0's group
    // through the shared edge and takes its frame (dP/du = +Y here). Vertex 3 belongs to no
    // contributing triangle and gets the fallback (+X), counted.
    //   2 ---- 3
    //   | \  1 |
    //   | 0 \  |
    //   0 ---- 1
    const positions = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0, 1, 1, 0]);
    const uvs = new Float32Array([0, 0, 0, -1, 1, 0, 0, -1]);
    const r = computeFrames(
      { positions, normals: up(4), uvs, indices: new Uint32Array([0, 1, 2, 1, 3, 2]) },
      { uvOrigin: 'bottom-left' },
    );
    expect(r.stats.degenerateUvTriangles).toBe(1);
    expect(tangentAtCorner(r, 0)).toEqual([0, 1, 0, 1]);
    expect(tangentAtCorner(r, 3)).toEqual([0, 1, 0, 1]);
    expect(tangentAtCorner(r, 5)).toEqual([0, 1, 0, 1]);
    expect(tangentAtCorner(r, 4)).toEqual([1, 0, 0, 1]);
    expect(r.stats.fallbackTangents).toBe(1);
  });

  it('isolatedDegenerateUvTriangleGetsTheFallback', () => {
    // One triangle, all UVs at one point: no direction at all. The documented fallback is +X
    // made orthogonal to N, w = +1, and it is counted.
    const positions = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0]);
    const normals = new Float32Array([0.6, 0, 0.8, 0.6, 0, 0.8, 0.6, 0, 0.8]);
    const r = computeFrames({ positions, normals, uvs: new Float32Array(6).fill(0.5) }, { uvOrigin: 'bottom-left' });
    expect(r.stats.degenerateUvTriangles).toBe(1);
    expect(r.stats.fallbackTangents).toBe(3);
    for (let v = 0; v < 3; v++) {
      const t = r.tangents.subarray(v * 4, v * 4 + 4);
      expect(Math.hypot(t[0], t[1], t[2])).toBeCloseTo(1, 6);
      expect(t[0] * 0.6 + t[2] * 0.8).toBeCloseTo(0, 6);
      expect(t[3]).toBe(1);
    }
  });

  it('degenerateTriangleTakesTheFrameOfItsWeldedVertex', () => {
    // Triangle 1 repeats vertex 1 (two corners weld to one vertex): it is set aside and its
    // corners copy the frame the same vertices have in triangle 0.
    const positions = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0]);
    const uvs = new Float32Array([0, 0, 1, 0, 0, 1]);
    const r = computeFrames(
      { positions, normals: up(3), uvs, indices: new Uint32Array([0, 1, 2, 1, 1, 2]) },
      { uvOrigin: 'bottom-left' },
    );
    for (let c = 3; c < 6; c++) expect(tangentAtCorner(r, c)).toEqual([1, 0, 0, 1]);
    expect(r.stats.splitVertices).toBe(0);
  });

  it('splitQuadKeepsOneOrientation', () => {
    // A quad split in two whose second triangle has a flipped UV orientation (bad mapping):
    // with a shared face id the smaller-UV-area triangle takes the larger one's orientation.
    //   3 ---- 2
    //   |    / |
    //   |  /   |
    //   0 ---- 1
    const positions = new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]);
    const uvs = new Float32Array([0, 0, 1, 0, 1, 1, 0.9, 0.2]);
    const indices = new Uint32Array([0, 1, 2, 0, 2, 3]);
    const apart = computeFrames({ positions, normals: up(4), uvs, indices }, { uvOrigin: 'bottom-left' });
    const quad = computeFrames({ positions, normals: up(4), uvs, indices, faces: new Uint32Array([7, 7]) }, { uvOrigin: 'bottom-left' });
    // Without the face id the orientations differ; with it, every corner has w = +1.
    const wApart = new Set(Array.from({ length: 6 }, (_, c) => tangentAtCorner(apart, c)[3]));
    expect(wApart.size).toBe(2);
    for (let c = 0; c < 6; c++) expect(tangentAtCorner(quad, c)[3]).toBe(1);
  });

  it('fannedPolygonTrianglesStayIndependent', () => {
    // A hexagon fanned from corner 0 into four triangles sharing one face id. Its UVs make the
    // first triangle orientation preserving and the other three mirrored:
    //   positions (regular hexagon)      uv
    //        4 ---- 3                    0 (0,0)  1 (1,0)  2 (1,1)
    //      /  \ ..   \                   3 (2,1)  4 (3,1)  5 (4,1)
    //     5 ---0------ 2                 det: t0 (0,1,2) +1; t1 (0,2,3), t2 (0,3,4), t3 (0,4,5) -1
    //           \    /
    //            1
    // Source: METHODS.md step 7: the method takes only triangles and quads; a polygon's fan
    // triangles are independent (no shared orientation). So a face id on them changes nothing,
    // where forcing pairs along the fan would have pulled every triangle to w = +1.
    const positions: number[] = [];
    for (let k = 0; k < 6; k++) positions.push(Math.cos((k - 3) * Math.PI / 3), Math.sin((k - 3) * Math.PI / 3), 0);
    const P = new Float32Array(positions);
    const uvs = new Float32Array([0, 0, 1, 0, 1, 1, 2, 1, 3, 1, 4, 1]);
    const indices = new Uint32Array([0, 1, 2, 0, 2, 3, 0, 3, 4, 0, 4, 5]);
    const apart = computeFrames({ positions: P, normals: up(6), uvs, indices }, { uvOrigin: 'bottom-left' });
    const fan = computeFrames({ positions: P, normals: up(6), uvs, indices, faces: new Uint32Array([3, 3, 3, 3]) }, { uvOrigin: 'bottom-left' });
    const w = (r: ReturnType<typeof computeFrames>) => [0, 1, 2, 3].map((t) => tangentAtCorner(r, t * 3 + 1)[3]);
    expect(w(fan)).toEqual([1, -1, -1, -1]);
    for (let c = 0; c < 12; c++) expect(tangentAtCorner(fan, c)).toEqual(tangentAtCorner(apart, c));
    expect(Array.from(fan.indices)).toEqual(Array.from(apart.indices));
    // Two triangles with one id are still a quad: the same first two triangles as a quad are
    // forced to one orientation (the mirrored one has the same UV area, so the first wins).
    const quad = computeFrames(
      { positions: P, normals: up(6), uvs, indices: indices.slice(0, 6), faces: new Uint32Array([3, 3]) },
      { uvOrigin: 'bottom-left' },
    );
    for (let c = 0; c < 6; c++) expect(tangentAtCorner(quad, c)[3]).toBe(1);
  });

  it('smoothSurfaceDoesNotSplit', () => {
    // A 3x3 grid with one consistent UV layout: one group per vertex, no split.
    const positions: number[] = [], uvs: number[] = [], idx: number[] = [];
    for (let y = 0; y < 3; y++) for (let x = 0; x < 3; x++) { positions.push(x, y, 0.1 * x * y); uvs.push(x / 2, y / 2); }
    for (let y = 0; y < 2; y++) for (let x = 0; x < 2; x++) {
      const a = y * 3 + x;
      idx.push(a, a + 1, a + 4, a, a + 4, a + 3);
    }
    const r = computeFrames({ positions: new Float32Array(positions), normals: up(9), uvs: new Float32Array(uvs), indices: new Uint32Array(idx) });
    expect(r.stats.splitVertices).toBe(0);
    expect(Array.from(r.sourceVertex)).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8]);
  });

  it('largeFanHubIsOneGroup', () => {
    // 100 triangles around hub vertex 0 on a cone, every normal tilted to (0.6, 0, 0.8), with
    // a bent UV mapping (u = x + 0.4 y^2, v = y + 0.4 x^2) so each triangle's projected dP/du
    // differs. The hub's corners are connected through shared edges (more than the 32 entries
    // at which the edge table sorts and bisects a vertex's row), so they form one group: the
    // hub is not split, and its frame is the average, unlike any single triangle's.
    //        i+1
    //       /
    //   0 ---- i      (hub 0 at the apex, rim vertices 1..101)
    const k = 100;
    const positions = new Float32Array((k + 2) * 3), uvs = new Float32Array((k + 2) * 2);
    positions.set([0, 0, 0.5], 0);
    uvs.set([0.5, 0.5], 0);
    for (let i = 0; i <= k; i++) {
      const a = (i / k) * 1.5 * Math.PI;
      positions.set([Math.cos(a), Math.sin(a), -0.5], (i + 1) * 3);
      uvs.set([0.5 + 0.4 * (Math.cos(a) + 0.4 * Math.sin(a) ** 2), 0.5 + 0.4 * (Math.sin(a) + 0.4 * Math.cos(a) ** 2)], (i + 1) * 2);
    }
    const normals = new Float32Array(Array.from({ length: k + 2 }, () => [0.6, 0, 0.8]).flat());
    const indices = new Uint32Array(k * 3);
    for (let i = 0; i < k; i++) indices.set([0, i + 1, i + 2], i * 3);
    const r = computeFrames({ positions, normals, uvs, indices }, { uvOrigin: 'bottom-left' });
    expect(Array.from(r.sourceVertex).filter((v) => v === 0).length).toBe(1);
    const hub = Array.from(r.tangents.subarray(0, 3));
    const one = computeFrames(
      { positions, normals, uvs, indices: indices.slice(0, 3) }, { uvOrigin: 'bottom-left' },
    );
    const single = Array.from(one.tangents.subarray(0, 3));
    const cos = hub[0] * single[0] + hub[1] * single[1] + hub[2] * single[2];
    expect(cos).toBeLessThan(0.9999);
  });

  it('hubWithManyDistinctFramesSplitsOncePerFrame', () => {
    // A fan of 300 triangles around hub vertex 0 whose UV orientation flips between
    // neighbours and whose rim v is scrambled: the hub gets many groups with different frames.
    // Splitting must give the hub exactly one output vertex per distinct frame among its
    // corners (no two copies with equal frames, no copy shared by different frames).
    const k = 300;
    const positions = new Float32Array((k + 2) * 3), uvs = new Float32Array((k + 2) * 2);
    for (let i = 0; i <= k; i++) {
      const a = (i / k) * 2 * Math.PI;
      positions.set([Math.cos(a), Math.sin(a), 0.3 * Math.sin(7 * a)], (i + 1) * 3);
      uvs.set([i % 2 ? 1 : 0, ((i * 7919) % 1000) / 1000], (i + 1) * 2);
    }
    uvs.set([0.5, 0.5], 0);
    const indices = new Uint32Array(k * 3);
    for (let i = 0; i < k; i++) indices.set([0, i + 1, i + 2], i * 3);
    const r = computeFrames({ positions, normals: up(k + 2), uvs, indices });
    const framesAtHub = new Map<string, number>();
    for (let t = 0; t < k; t++) {
      const key = tangentAtCorner(r, t * 3).join();
      const o = r.indices[t * 3];
      expect(r.sourceVertex[o]).toBe(0);
      if (framesAtHub.has(key)) expect(framesAtHub.get(key)).toBe(o);
      framesAtHub.set(key, o);
    }
    const hubCopies = Array.from(r.sourceVertex).filter((v) => v === 0).length;
    expect(hubCopies).toBe(framesAtHub.size);
    expect(hubCopies).toBeGreaterThan(100);
  });
});
