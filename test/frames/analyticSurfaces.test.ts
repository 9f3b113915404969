/**
 * Frames on meshes sampled from analytic surfaces, against the exact frames.
 * Source: analytic surface, differential geometry (do Carmo, "Differential Geometry of Curves
 * and Surfaces"; METHODS.md "Analytic checks"): exact tangent = normalised component of dP/du
 * orthogonal to N, w = sign(dot(cross(N, dP/du), dP/dv)); the error of a computed frame
 * shrinks roughly with the square of the mesh spacing.
 *
 * Meshes (test/helpers/surfaces.ts): sphere band, cylinder, torus (u around the axis, v up /
 * around the tube), and a wavy sheet whose left half has mirrored UVs (u = |s|):
 *
 *   u: 1 <-- 0 | 0 --> 1
 *      mirrored | plain      seam: split (one copy per side) or shared (one vertex)
 */
import { describe, expect, it } from 'vitest';
import { computeFrames } from '../../src/frames/computeFrames.js';
import type { FrameMethod, UvOrigin } from '../../src/mesh/types.js';
import { compareWithExact, type FrameComparison } from '../helpers/frameCheck.js';
import { cylinder, mirroredSheet, sphere, torus, type SurfaceMesh } from '../helpers/surfaces.js';

const N0 = 16;
/** float32 storage of unit vectors: a tangent is unit and orthogonal to N to about 1e-7. */
const UNIT_TOL = 1e-5;
/**
 * Halving the spacing must divide the mean tangent error by at least this (4 is second
 * order). Source: METHODS.md "Analytic checks" (error ~ spacing squared); 3 leaves room for
 * the higher-order terms at these resolutions.
 */
const MIN_MEAN_RATIO = 3;

/**
 * Largest tangent error (degrees) accepted where the mesh reproduces the exact tangent:
 * float32 storage of positions, normals and results limits agreement to ~1e-5 degrees.
 */
const FLOAT_DEG = 1e-4;

interface SurfaceCase {
  name: string;
  make: (n: number, uvOrigin: UvOrigin) => SurfaceMesh;
  methods: FrameMethod[];
  /**
   * True when any positive weighting of the triangles' u-derivatives gives the exact tangent
   * after Gram-Schmidt, so the error is float rounding at every resolution and has no order.
   */
  exactOnMesh?: boolean;
}

const surfaces: SurfaceCase[] = [
  { name: 'sphere', make: (n, o) => sphere({ n, uvOrigin: o }), methods: ['lengyel', 'mikktspace'] },
  // Cylinder: z = 2v - 1 is linear in v, so every triangle's interpolated dP/du has no z part,
  // and its horizontal part, a sum of chords at azimuths phi_m with |phi_m - phi_0| < pi/2,
  // projects onto the tangent plane at phi_0 as a positive multiple of dP/du: the computed
  // tangent is exact, even on the one-sided seam and border vertices.
  // Source: analytic surface, differential geometry (chord of a circle).
  { name: 'cylinder', make: (n, o) => cylinder({ n, uvOrigin: o }), methods: ['lengyel', 'mikktspace'], exactOnMesh: true },
  { name: 'torus', make: (n, o) => torus({ n, uvOrigin: o }), methods: ['lengyel', 'mikktspace'] },
  { name: 'mirrored sheet (split seam)', make: (n, o) => mirroredSheet({ n, uvOrigin: o, seam: 'split' }), methods: ['lengyel', 'mikktspace'] },
  // One vertex used by both sides of the mirror line: only a method that splits vertices
  // where frames differ can give each side its frame, and `lengyel` keeps one frame per input
  // vertex by design, so this case is for `mikktspace` only.
  { name: 'mirrored sheet (shared seam)', make: (n, o) => mirroredSheet({ n, uvOrigin: o, seam: 'shared' }), methods: ['mikktspace'] },
];
const origins: UvOrigin[] = ['bottom-left', 'top-left'];

function fmt(c: FrameComparison): string {
  return `max ${c.maxDeg.toExponential(3)} deg, mean ${c.meanDeg.toExponential(3)} deg ` +
    `(interior max ${c.interiorMaxDeg.toExponential(3)}, mean ${c.interiorMeanDeg.toExponential(3)}), ` +
    `vertices ${c.verticesIn} -> ${c.verticesOut}`;
}

function expectSound(c: FrameComparison): void {
  expect(c.structural).toEqual([]);
  expect(c.conflicts).toEqual([]);
  expect(c.wMismatches).toEqual([]);
  expect(c.wMismatchCount).toBe(0);
  // Source: glTF 2.0 spec (TANGENT xyz unit); orthogonal to N by Gram-Schmidt (METHODS.md).
  expect(c.maxUnitError).toBeLessThanOrEqual(UNIT_TOL);
  expect(c.maxNormalDot).toBeLessThanOrEqual(UNIT_TOL);
}

describe('frames on analytic surfaces', () => {
  for (const s of surfaces) {
    for (const method of s.methods) {
      for (const uvOrigin of origins) {
        it(`${s.name}, ${method}, ${uvOrigin}: w is the analytic handedness everywhere and the tangent error is second order`, () => {
          const coarse = s.make(N0, uvOrigin);
          const fine = s.make(2 * N0, uvOrigin);
          const rc = computeFrames(coarse, { method, uvOrigin });
          const rf = computeFrames(fine, { method, uvOrigin });
          const cc = compareWithExact(coarse, rc);
          const cf = compareWithExact(fine, rf);
          const ratio = cc.meanDeg / cf.meanDeg;
          console.log(`[analytic] ${s.name} ${method} ${uvOrigin}\n  n=${N0}: ${fmt(cc)}\n  n=${2 * N0}: ${fmt(cf)}\n` +
            (s.exactOnMesh ? '  exact on this mesh up to float rounding (ratios meaningless)'
              : `  mean ratio ${ratio.toFixed(2)}, max ratio ${(cc.maxDeg / cf.maxDeg).toFixed(2)}; worst at n=${2 * N0}: ${cf.worst}`));
          expectSound(cc);
          expectSound(cf);
          if (s.exactOnMesh) {
            // Source: analytic surface, differential geometry (see the cylinder case above).
            expect(cc.maxDeg).toBeLessThanOrEqual(FLOAT_DEG);
            expect(cf.maxDeg).toBeLessThanOrEqual(FLOAT_DEG);
            return;
          }
          // Source: analytic surface, differential geometry (error ~ spacing^2 on average).
          expect(ratio).toBeGreaterThanOrEqual(MIN_MEAN_RATIO);
          // The largest error sits where a vertex sees one side only (borders, seams), a first
          // order error; it must still shrink with the spacing.
          expect(cf.maxDeg).toBeLessThan(cc.maxDeg);
        });
      }
    }
  }

  it('UV-origin trap: solving bottom-left uvs as top-left flips every w and keeps every tangent', () => {
    // Source: METHODS.md glTF facts: reading v downward negates every dv, t unchanged, w flips.
    for (const s of surfaces) {
      for (const method of s.methods) {
        const mesh = s.make(N0, 'bottom-left');
        const right = computeFrames(mesh, { method, uvOrigin: 'bottom-left' });
        const wrong = computeFrames(mesh, { method, uvOrigin: 'top-left' });
        const c = compareWithExact(mesh, wrong, -1);
        expectSound(c);
        const cr = compareWithExact(mesh, right);
        // Same tangent errors either way: flipping v never changes the u direction.
        expect(Math.abs(c.maxDeg - cr.maxDeg)).toBeLessThanOrEqual(1e-3);
        expect(Math.abs(c.meanDeg - cr.meanDeg)).toBeLessThanOrEqual(1e-3);
      }
    }
  });

  it('the generators store v_gltf = 1 - v for top-left, so the two meshes differ only in v', () => {
    // Guards the helper itself: same positions, normals and u; v mirrored; same expected w.
    const a = sphere({ n: 4, uvOrigin: 'bottom-left' });
    const b = sphere({ n: 4, uvOrigin: 'top-left' });
    expect(b.positions).toEqual(a.positions);
    expect(b.indices).toEqual(a.indices);
    for (let v = 0; v < a.uvs.length / 2; v++) {
      expect(b.uvs[v * 2]).toBe(a.uvs[v * 2]);
      expect(Math.abs(b.uvs[v * 2 + 1] - (1 - a.uvs[v * 2 + 1]))).toBeLessThanOrEqual(1e-7);
      expect(b.exact.w[v]).toBe(a.exact.w[v]);
      expect(b.exact.wAsStored[v]).toBe(-a.exact.w[v]);
    }
  });
});
