import { describe, expect, it } from 'vitest';
import {
  RASTER_DEGENERATE, RASTER_NOT_FINITE, RASTER_OK, RASTER_TOO_LARGE, countCoverage, createSpanBuffer, rasterWork, rasterizeTriangle,
} from '../../src/imaging/rasterize.js';
import { mulberry32 } from '../helpers/surfaces.js';

/**
 * A UV grid of (nu x nv) quads over [u0, u0 + su] x [v0, v0 + sv]; interior vertices jittered by
 * up to `jitter` of a cell, each quad split along a random diagonal with random winding.
 */
function uvGrid(nu: number, nv: number, u0: number, v0: number, su: number, sv: number, jitter: number, seed: number) {
  const rand = mulberry32(seed);
  const uvs = new Float32Array((nu + 1) * (nv + 1) * 2);
  for (let j = 0; j <= nv; j++) {
    for (let i = 0; i <= nu; i++) {
      const inner = i > 0 && i < nu && j > 0 && j < nv;
      const du = inner ? (rand() - 0.5) * jitter : 0, dv = inner ? (rand() - 0.5) * jitter : 0;
      uvs[(j * (nu + 1) + i) * 2] = u0 + ((i + du) / nu) * su;
      uvs[(j * (nu + 1) + i) * 2 + 1] = v0 + ((j + dv) / nv) * sv;
    }
  }
  const idx: number[] = [];
  for (let j = 0; j < nv; j++) {
    for (let i = 0; i < nu; i++) {
      const a = j * (nu + 1) + i, b = a + 1, c = a + nu + 1, d = c + 1;
      const tris = rand() < 0.5 ? [[a, b, d], [a, d, c]] : [[a, b, c], [b, d, c]];
      for (const t of tris) idx.push(...(rand() < 0.5 ? t : [t[0], t[2], t[1]]));
    }
  }
  return { uvs, indices: new Uint32Array(idx), triangles: idx.length / 3 };
}

function coverage(uvs: number[] | Float32Array, indices: number[] | Uint32Array, w: number, h: number) {
  const counts = new Uint32Array(w * h);
  const stats = countCoverage(counts, Float32Array.from(uvs), Uint32Array.from(indices), indices.length / 3, w, h);
  return { counts, stats };
}

describe('rasteriser fill rule: shared edges are covered exactly once', () => {
  it('two triangles of a quad cover every texel of the quad exactly once', () => {
    //  (0,0) a ---- b (1,0)        v grows downward (glTF)
    //        | \    |
    //        |   \  |
    //  (0,1) c ---- d (1,1)
    const uvs = [0, 0, 1, 0, 0, 1, 1, 1];
    for (const indices of [[0, 3, 1, 0, 2, 3], [0, 1, 3, 0, 3, 2], [0, 1, 2, 1, 3, 2], [2, 1, 0, 2, 3, 1]]) {
      for (const [w, h] of [[16, 16], [37, 23], [5, 64]]) {
        const { counts } = coverage(uvs, indices, w, h);
        expect(Math.min(...counts)).toBe(1);
        expect(Math.max(...counts)).toBe(1);
      }
    }
  });

  it('a jittered triangulation of the unit square covers every texel exactly once', () => {
    for (const seed of [1, 2, 3]) {
      const g = uvGrid(13, 9, 0, 0, 1, 1, 0.8, seed);
      const { counts, stats } = coverage(g.uvs, g.indices, 61, 47);
      expect(stats.degenerate).toBe(0);
      expect(Math.min(...counts)).toBe(1);
      expect(Math.max(...counts)).toBe(1);
    }
  });

  it('edges through texel centres: interior texels once, mesh border by the top-left rule', () => {
    // 8 x 8 image; grid vertices exactly on texel centres (i + 0.5) / 8, so every interior
    // edge of the axis-aligned cells and their diagonals passes through texel centres.
    const n = 7, uvs: number[] = [], idx: number[] = [];
    for (let j = 0; j <= n; j++) for (let i = 0; i <= n; i++) uvs.push((i + 0.5) / 8, (j + 0.5) / 8);
    for (let j = 0; j < n; j++) {
      for (let i = 0; i < n; i++) {
        const a = j * (n + 1) + i, b = a + 1, c = a + n + 1, d = c + 1;
        if ((i + j) % 2) idx.push(a, b, d, a, d, c); else idx.push(a, b, c, b, d, c);
      }
    }
    const { counts } = coverage(uvs, idx, 8, 8);
    for (let y = 0; y < 8; y++) {
      for (let x = 0; x < 8; x++) {
        // Centres from (0.5, 0.5) to (7.5, 7.5) texels are on the mesh; the top and left borders
        // are included, the bottom row and right column (x = 7 or y = 7) are not.
        const expected = x < 7 && y < 7 ? 1 : 0;
        expect(counts[y * 8 + x], `texel ${x},${y}`).toBe(expected);
      }
    }
  });
});

describe('rasteriser barycentric weights', () => {
  it('weights sum to 1 and reproduce the texel centre; coverage matches a point-in-triangle test', () => {
    const W = 40, H = 30;
    // Vertices on the 1/256-texel grid so snapping changes nothing.
    const tri = [[3.25, 2.5], [35.75, 9.0], [11.5, 27.25]].map(([x, y]) => [x / W, y / H]);
    const spans = createSpanBuffer(4);
    expect(rasterizeTriangle(spans, tri[0][0], tri[0][1], tri[1][0], tri[1][1], tri[2][0], tri[2][1], W, H)).toBe(RASTER_OK);
    const got = new Set<number>();
    for (let s = 0; s < spans.count; s++) {
      for (let x = spans.x0[s]; x < spans.x1[s]; x++) {
        const k = x - spans.x0[s];
        const w0 = spans.w[s * 3] + k * spans.dw[0], w1 = spans.w[s * 3 + 1] + k * spans.dw[1], w2 = spans.w[s * 3 + 2] + k * spans.dw[2];
        expect(w0 + w1 + w2).toBeCloseTo(1, 12);
        expect(Math.min(w0, w1, w2)).toBeGreaterThanOrEqual(0);
        const u = w0 * tri[0][0] + w1 * tri[1][0] + w2 * tri[2][0];
        const v = w0 * tri[0][1] + w1 * tri[1][1] + w2 * tri[2][1];
        expect(u * W).toBeCloseTo(x + 0.5, 9);
        expect(v * H).toBeCloseTo(spans.y[s] + 0.5, 9);
        got.add(spans.y[s] * W + x);
      }
    }
    // Independent inside test on texel centres (none of them lies on an edge here).
    // Source: sign of the 2-D cross product (half-plane test).
    const cross = (a: number[], b: number[], px: number, py: number) => (b[0] - a[0]) * (py - a[1]) - (b[1] - a[1]) * (px - a[0]);
    const P = tri.map(([u, v]) => [u * W, v * H]);
    let expectedCount = 0;
    for (let y = 0; y < H; y++) {
      for (let x = 0; x < W; x++) {
        const e0 = cross(P[0], P[1], x + 0.5, y + 0.5), e1 = cross(P[1], P[2], x + 0.5, y + 0.5), e2 = cross(P[2], P[0], x + 0.5, y + 0.5);
        const inside = (e0 > 0 && e1 > 0 && e2 > 0) || (e0 < 0 && e1 < 0 && e2 < 0);
        if (inside) expectedCount++;
        expect(got.has(y * W + x), `texel ${x},${y}`).toBe(inside);
      }
    }
    expect(expectedCount).toBeGreaterThan(300);
  });

  it('weights follow the vertex order whatever the winding', () => {
    const W = 16, H = 16;
    const spans = createSpanBuffer();
    rasterizeTriangle(spans, 0.1, 0.1, 0.9, 0.2, 0.3, 0.9, W, H);
    const a = Array.from(spans.w.subarray(0, spans.count * 3));
    rasterizeTriangle(spans, 0.1, 0.1, 0.3, 0.9, 0.9, 0.2, W, H);
    const b = Array.from(spans.w.subarray(0, spans.count * 3));
    expect(a.length).toBe(b.length);
    // Swapping vertices 1 and 2 swaps their weights and nothing else.
    for (let s = 0; s < a.length / 3; s++) {
      expect(b[s * 3]).toBeCloseTo(a[s * 3], 12);
      expect(b[s * 3 + 1]).toBeCloseTo(a[s * 3 + 2], 12);
      expect(b[s * 3 + 2]).toBeCloseTo(a[s * 3 + 1], 12);
    }
  });
});

describe('rasteriser wraps UVs outside [0, 1] into the image', () => {
  it('a triangle spanning u in [1, 2] (or v in [-1, 0]) lands on the same texels as in [0, 1]', () => {
    const base = [0.1, 0.2, 0.85, 0.35, 0.4, 0.95];
    const ref = coverage(base, [0, 1, 2], 32, 32).counts;
    expect(ref.reduce((s, c) => s + c, 0)).toBeGreaterThan(100);
    for (const [du, dv] of [[1, 0], [0, -1], [-3, 2], [5, 5]]) {
      const moved = base.map((x, i) => x + (i % 2 === 0 ? du : dv));
      expect(Array.from(coverage(moved, [0, 1, 2], 32, 32).counts)).toEqual(Array.from(ref));
    }
  });

  it('a triangulated tile crossing both wrap borders covers every texel exactly once', () => {
    // A jittered grid over [0.6, 1.6] x [-0.35, 0.65]: one tile's worth of UV area that crosses
    // u = 1 and v = 0, so triangles straddle the wrap borders.
    const g = uvGrid(11, 7, 0.6, -0.35, 1, 1, 0.7, 9);
    const { counts } = coverage(g.uvs, g.indices, 50, 34);
    expect(Math.min(...counts)).toBe(1);
    expect(Math.max(...counts)).toBe(1);
  });

  it('a triangle crossing u = 1 covers the right border and the left border', () => {
    const W = 20, H = 10;
    const { counts } = coverage([0.9, 0.1, 1.2, 0.1, 0.9, 0.9], [0, 1, 2], W, H);
    // Same as the two pieces rasterised separately: the part in [0.9, 1] and the part in [1, 1.2]
    // shifted back by one tile, i.e. texel columns 18..19 and 0..3.
    const cols = new Set<number>();
    for (let i = 0; i < counts.length; i++) if (counts[i]) cols.add(i % W);
    expect([...cols].sort((a, b) => a - b)).toEqual([0, 1, 2, 3, 18, 19]);
  });
});

describe('rasteriser skips what it cannot cover', () => {
  it('reports zero-area, non-finite and huge triangles without spans', () => {
    const spans = createSpanBuffer();
    expect(rasterizeTriangle(spans, 0.1, 0.1, 0.5, 0.5, 0.9, 0.9, 8, 8)).toBe(RASTER_DEGENERATE);
    expect(spans.count).toBe(0);
    expect(rasterizeTriangle(spans, NaN, 0.1, 0.5, 0.5, 0.9, 0.1, 8, 8)).toBe(RASTER_NOT_FINITE);
    expect(rasterizeTriangle(spans, 0, 0, Infinity, 0, 0, 1, 8, 8)).toBe(RASTER_NOT_FINITE);
    expect(rasterizeTriangle(spans, 0, 0, 1e15, 0, 0, 1, 8, 8)).toBe(RASTER_NOT_FINITE);
    expect(rasterizeTriangle(spans, 0, 0, 100, 0, 0, 100, 8, 8)).toBe(RASTER_TOO_LARGE);
    expect(spans.count).toBe(0);
  });
});

describe('rasterWork: the texel budget estimate', () => {
  it('is at least the texels covered plus the spans made, for small, thin and wrapping triangles', () => {
    const spans = createSpanBuffer();
    const cases: number[][] = [
      [0.1, 0.1, 0.9, 0.2, 0.3, 0.8], // ordinary
      [0, 0, 1, 0.001, 0.002, 1], // a thin sliver over all rows
      [-0.5, -0.5, 2.5, -0.5, -0.5, 2.5], // wraps over 3 x 3 tiles
      [0.3, 0.3, 0.3001, 0.3, 0.3, 0.3001], // smaller than a texel
    ];
    for (const [u0, v0, u1, v1, u2, v2] of cases) {
      expect(rasterizeTriangle(spans, u0, v0, u1, v1, u2, v2, 64, 48)).toBe(RASTER_OK);
      let texels = 0;
      for (let s = 0; s < spans.count; s++) texels += spans.x1[s] - spans.x0[s];
      const work = rasterWork(u0, v0, u1, v1, u2, v2, 64, 48);
      expect(work).toBeGreaterThanOrEqual(spans.count);
      // The snapped area stands for the covered texels: equal up to the texels along the edges.
      expect(work).toBeGreaterThanOrEqual(texels * 0.9);
      expect(work).toBeLessThanOrEqual(texels + spans.count * 3 + 64);
    }
  });

  it('counts a triangle over 32 x 32 tiles as covering the map about 512 times', () => {
    const work = rasterWork(0, 0.05, 31.9, 0.05, 31.9, 31.95, 64, 64);
    const texels = 64 * 64;
    expect(work / texels).toBeGreaterThan(400);
    expect(work / texels).toBeLessThan(600);
  });
});
