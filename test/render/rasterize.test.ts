import { describe, expect, it } from 'vitest';
import { createVisibility, rasterizeInstance } from '../../src/render/index.js';
import { mulberry32 } from '../helpers/surfaces.js';

/** Samples triangle (a, b, c) covers alone, in a fresh w x h buffer (screen coordinates in samples). */
function covered(w: number, h: number, tri: number[][]): Set<number> {
  const vis = createVisibility(w, h);
  const screen = new Float64Array(12);
  tri.forEach((p, k) => { screen[k * 4] = p[0]; screen[k * 4 + 1] = p[1]; screen[k * 4 + 2] = 0; screen[k * 4 + 3] = 1; });
  rasterizeInstance(vis, screen, new Uint32Array([0, 1, 2]), 1, 0, -1, false, new Uint8Array(1));
  const out = new Set<number>();
  for (let o = 0; o < w * h; o++) if (vis.triangle[o] === 0) out.add(o);
  return out;
}

describe('the fill rule', () => {
  it('gives every sample of a shared edge to exactly one of the two triangles, also when the edge runs through sample centres', () => {
    // Source: the top-left rule (Direct3D / OpenGL practice): a sample exactly on an edge belongs to
    // the triangle for which that edge is a top or left edge, so a mesh covers each sample once.
    //   (0.5,0.5) ---- (7.5,0.5)      the diagonal and the sides pass through sample centres
    //       |       /      |
    //   (0.5,7.5) ---- (7.5,7.5)
    const quads = [[[0.5, 0.5], [7.5, 0.5], [7.5, 7.5], [0.5, 7.5]], [[1, 1], [7, 1.25], [6.5, 7], [0.75, 6]]];
    const rnd = mulberry32(16);
    for (let k = 0; k < 20; k++) {
      const q = [[0, 0], [8, 0], [8, 8], [0, 8]].map(([x, y]) => [x + Math.round(rnd() * 4) / 2 - 1, y + Math.round(rnd() * 4) / 2 - 1]);
      quads.push(q);
    }
    for (const q of quads) {
      for (const [a, b] of [[0, 2], [1, 3]]) {
        const c = a === 0 ? [1, 3] : [2, 0];
        // Both windings of each half, so the rule does not depend on orientation.
        const t1 = [q[a], q[c[0]], q[b]], t2 = [q[a], q[b], q[c[1]]];
        for (const flip of [false, true]) {
          const s1 = covered(10, 10, flip ? [t1[0], t1[2], t1[1]] : t1);
          const s2 = covered(10, 10, flip ? [t2[0], t2[2], t2[1]] : t2);
          for (const o of s1) expect(s2.has(o), `sample ${o} covered twice`).toBe(false);
          // The union is the quad: a sample strictly inside the quad is covered by one of them.
          for (let y = 0; y < 10; y++) {
            for (let x = 0; x < 10; x++) {
              const px = x + 0.5, py = y + 0.5;
              if (strictlyInsideConvex(q, px, py, 1e-9)) expect(s1.has(y * 10 + x) || s2.has(y * 10 + x), `gap at ${x},${y}`).toBe(true);
            }
          }
        }
      }
    }
  });
});

/** Whether (x, y) lies inside the convex polygon (either winding) by more than eps from every side. */
function strictlyInsideConvex(poly: number[][], x: number, y: number, eps: number): boolean {
  let pos = 0, neg = 0;
  for (let i = 0; i < poly.length; i++) {
    const a = poly[i], b = poly[(i + 1) % poly.length];
    const e = (b[0] - a[0]) * (y - a[1]) - (b[1] - a[1]) * (x - a[0]);
    const l = Math.hypot(b[0] - a[0], b[1] - a[1]);
    if (e / l > eps) pos++;
    else if (e / l < -eps) neg++;
    else return false;
  }
  return pos === poly.length || neg === poly.length;
}
