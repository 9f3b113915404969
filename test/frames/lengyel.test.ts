// The `lengyel` weights (DESIGN.md): derivative adds unnormalised per-triangle solutions;
// angle / area / uniform normalise them first and weight by corner angle, area or 1.
import { describe, expect, it } from 'vitest';
import { computeFrames } from '../../src/frames/computeFrames.js';

// Two triangles meeting at vertex 0 in the plane z = 0, each with its own dP/du:
//   triangle A (0,1,2): dP/du = +X, large in space, small UV extent -> large derivative
//   triangle B (0,3,4): dP/du = +Y, small in space
//            2
//            |
//     4 ---- 0 ---------- 1
//            |
//            3
const positions = new Float32Array([0, 0, 0, 4, 0, 0, 0, 4, 0, 0, -1, 0, -1, 0, 0]);
const uvs = new Float32Array([0, 0, 1, 0, 0, 1, -1, 0, 0, -1]);
const normals = new Float32Array(15);
for (let i = 0; i < 5; i++) normals[i * 3 + 2] = 1;
const indices = new Uint32Array([0, 1, 2, 0, 3, 4]);

function t0(weight: 'derivative' | 'angle' | 'area' | 'uniform'): number[] {
  const r = computeFrames({ positions, normals, uvs, indices }, { method: 'lengyel', weight, uvOrigin: 'bottom-left' });
  return Array.from(r.tangents.subarray(0, 4));
}

describe('lengyel weights', () => {
  it('weightsChangeTheSharedVertex', () => {
    // Per-triangle solutions (Lengyel 2001 formula): A: T = (4,0,0); B: positions 0,(0,-1),(-1,0)
    // with uvs (0,0),(-1,0),(0,-1): T = (0,1,0) (|T| = 1).
    // derivative: (4,1,0) normalised; uniform: (1,1,0)/sqrt2; area: A has area 8, B 0.5 ->
    // (8,0.5,0) normalised; angle: both corners are 90 degrees -> same as uniform.
    const d = t0('derivative');
    expect(d[0]).toBeCloseTo(4 / Math.hypot(4, 1), 6);
    expect(d[1]).toBeCloseTo(1 / Math.hypot(4, 1), 6);
    const u = t0('uniform');
    expect(u[0]).toBeCloseTo(Math.SQRT1_2, 6);
    expect(u[1]).toBeCloseTo(Math.SQRT1_2, 6);
    const a = t0('area');
    expect(a[0]).toBeCloseTo(8 / Math.hypot(8, 0.5), 6);
    expect(a[1]).toBeCloseTo(0.5 / Math.hypot(8, 0.5), 6);
    const g = t0('angle');
    expect(g[0]).toBeCloseTo(Math.SQRT1_2, 6);
    expect(g[1]).toBeCloseTo(Math.SQRT1_2, 6);
    for (const t of [d, u, a, g]) expect(t[3]).toBe(1);
  });

  it('neverSplitsVertices', () => {
    const r = computeFrames({ positions, normals, uvs, indices }, { method: 'lengyel' });
    expect(r.stats.splitVertices).toBe(0);
    expect(Array.from(r.sourceVertex)).toEqual([0, 1, 2, 3, 4]);
    expect(Array.from(r.indices)).toEqual(Array.from(indices));
  });
});
