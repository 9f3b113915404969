/**
 * Based on: parametric surfaces and their first derivatives (differential geometry, e.g.
 * do Carmo, "Differential Geometry of Curves and Surfaces"). Test-only mesh generators with
 * exact analytic normals and exact tangent frames, plus a deterministic noisy scan-like
 * surface for cross-checks and benchmarks.
 *
 * UV convention. Every analytic surface is parametrised by texture coordinates (u, v) in
 * [0, 1] with v measured UPWARD (OBJ / OpenGL, `uvOrigin: 'bottom-left'`): the exact
 * bitangent direction is dP/dv. With `uvOrigin: 'top-left'` (glTF) the generator stores
 * v_gltf = 1 - v, which maps the same image onto the same surface. Measured against the
 * stored v_gltf as given, the handedness sign(dot(cross(N, dP/du), dP/dv_gltf)) is the
 * analytic one flipped; glTF's convention (the encoded bitangent points toward decreasing
 * v_gltf, METHODS.md "glTF 2.0 facts" / UV-origin trap) flips it back. So `exact.w` is the
 * TANGENT w a correct solve must output for the mesh's own `uvOrigin`, and it is the same
 * number for both origins; `exact.wAsStored` is the handedness measured against the stored
 * v as given (what a solver that ignores the origin would output), equal to -w for
 * 'top-left'. The exact tangent (normalised dP/du made orthogonal to N) does not depend on
 * the origin.
 */
import type { UvOrigin } from '../../src/mesh/types.js';

/** Exact frames: 3 floats (unit tangent) and 1 float (w = +1 | -1) per entry. */
export interface ExactFrames {
  /** Normalised dP/du made orthogonal to N, 3 per entry. */
  tangent: Float32Array;
  /** Expected TANGENT w for the mesh's uvOrigin, 1 per entry. */
  w: Float32Array;
  /** Handedness measured against the stored v exactly as given, 1 per entry. */
  wAsStored: Float32Array;
}

/** An indexed mesh sampled from an analytic surface, with its exact frames. */
export interface SurfaceMesh {
  name: string;
  uvOrigin: UvOrigin;
  positions: Float32Array;
  normals: Float32Array;
  uvs: Float32Array;
  indices: Uint32Array;
  /** Exact frames per vertex. */
  exact: ExactFrames;
  /**
   * Exact frames per triangle corner (3 entries per triangle, in index order). Differs from
   * `exact` at `indices[c]` only where one vertex is shared by triangles whose exact frames
   * differ (a shared mirror seam): each corner then takes the frame of its triangle's side.
   */
  exactCorner: ExactFrames;
  /** 1 for vertices on a mesh border or UV seam (one-sided neighbourhood), else 0. */
  boundary: Uint8Array;
  /** Per triangle: -1 on a mirrored UV half, +1 otherwise. */
  triangleSide: Int8Array;
}

/** Options shared by the analytic generators. */
export interface SurfaceOptions {
  /** Resolution: the surface has about 2n x n quads (n x n per half for the mirrored sheet). */
  n: number;
  /** Where v = 0 lies; default 'bottom-left'. 'top-left' stores v_gltf = 1 - v. */
  uvOrigin?: UvOrigin;
}

/**
 * A sample of a surface at grid parameters: position, unit normal, texture coordinates
 * (v upward) and the derivatives of the position along texture u and v.
 */
interface Sample {
  p: [number, number, number];
  n: [number, number, number];
  u: number;
  v: number;
  pu: [number, number, number];
  pv: [number, number, number];
}

type Evaluator = (a: number, b: number) => Sample;

interface Grid {
  positions: number[];
  normals: number[];
  uvs: number[];
  indices: number[];
  tangent: number[];
  w: number[];
  wAsStored: number[];
  boundary: number[];
}

function normalize3(x: number, y: number, z: number): [number, number, number] {
  const l = Math.hypot(x, y, z);
  return [x / l, y / l, z / l];
}

/**
 * Samples `evaluate` on an (na+1) x (nb+1) grid over [0,1]^2 and triangulates each quad
 * along its (i,j)-(i+1,j+1) diagonal, winding triangles so that their geometric normal
 * agrees with the analytic one. Columns a=0 and a=1 are separate vertices (a UV seam as an
 * exporter writes it).
 */
function sampleGrid(evaluate: Evaluator, na: number, nb: number, uvOrigin: UvOrigin, into: Grid): void {
  const base = into.positions.length / 3;
  const flip = uvOrigin === 'top-left';
  for (let j = 0; j <= nb; j++) {
    for (let i = 0; i <= na; i++) {
      const s = evaluate(i / na, j / nb);
      into.positions.push(s.p[0], s.p[1], s.p[2]);
      into.normals.push(s.n[0], s.n[1], s.n[2]);
      into.uvs.push(s.u, flip ? 1 - s.v : s.v);
      // Exact tangent: dP/du with its normal component removed, normalised.
      const d = s.pu[0] * s.n[0] + s.pu[1] * s.n[1] + s.pu[2] * s.n[2];
      const t = normalize3(s.pu[0] - s.n[0] * d, s.pu[1] - s.n[1] * d, s.pu[2] - s.n[2] * d);
      into.tangent.push(t[0], t[1], t[2]);
      // Handedness against upward v: sign(dot(cross(N, dP/du), dP/dv)).
      const cx = s.n[1] * s.pu[2] - s.n[2] * s.pu[1];
      const cy = s.n[2] * s.pu[0] - s.n[0] * s.pu[2];
      const cz = s.n[0] * s.pu[1] - s.n[1] * s.pu[0];
      const w = cx * s.pv[0] + cy * s.pv[1] + cz * s.pv[2] < 0 ? -1 : 1;
      into.w.push(w);
      into.wAsStored.push(flip ? -w : w);
      into.boundary.push(i === 0 || i === na || j === 0 || j === nb ? 1 : 0);
    }
  }
  const row = na + 1;
  const P = into.positions, N = into.normals;
  const pushTri = (a: number, b: number, c: number): void => {
    const e1x = P[b * 3] - P[a * 3], e1y = P[b * 3 + 1] - P[a * 3 + 1], e1z = P[b * 3 + 2] - P[a * 3 + 2];
    const e2x = P[c * 3] - P[a * 3], e2y = P[c * 3 + 1] - P[a * 3 + 1], e2z = P[c * 3 + 2] - P[a * 3 + 2];
    const gx = e1y * e2z - e1z * e2y, gy = e1z * e2x - e1x * e2z, gz = e1x * e2y - e1y * e2x;
    const nx = N[a * 3] + N[b * 3] + N[c * 3], ny = N[a * 3 + 1] + N[b * 3 + 1] + N[c * 3 + 1];
    const nz = N[a * 3 + 2] + N[b * 3 + 2] + N[c * 3 + 2];
    if (gx * nx + gy * ny + gz * nz >= 0) into.indices.push(a, b, c);
    else into.indices.push(a, c, b);
  };
  for (let j = 0; j < nb; j++) {
    for (let i = 0; i < na; i++) {
      const v00 = base + j * row + i, v10 = v00 + 1, v01 = v00 + row, v11 = v01 + 1;
      pushTri(v00, v10, v11);
      pushTri(v00, v11, v01);
    }
  }
}

function emptyGrid(): Grid {
  return { positions: [], normals: [], uvs: [], indices: [], tangent: [], w: [], wAsStored: [], boundary: [] };
}

function finish(name: string, uvOrigin: UvOrigin, g: Grid, sides?: number[], cornerOverride?: Grid): SurfaceMesh {
  const exact: ExactFrames = {
    tangent: new Float32Array(g.tangent),
    w: new Float32Array(g.w),
    wAsStored: new Float32Array(g.wAsStored),
  };
  const corners = g.indices.length;
  const src = cornerOverride ?? g;
  const exactCorner: ExactFrames = {
    tangent: new Float32Array(corners * 3),
    w: new Float32Array(corners),
    wAsStored: new Float32Array(corners),
  };
  for (let c = 0; c < corners; c++) {
    const v = src.indices[c];
    exactCorner.tangent[c * 3] = src.tangent[v * 3];
    exactCorner.tangent[c * 3 + 1] = src.tangent[v * 3 + 1];
    exactCorner.tangent[c * 3 + 2] = src.tangent[v * 3 + 2];
    exactCorner.w[c] = src.w[v];
    exactCorner.wAsStored[c] = src.wAsStored[v];
  }
  const triangleSide = new Int8Array(corners / 3).fill(1);
  if (sides) for (let t = 0; t < sides.length; t++) triangleSide[t] = sides[t];
  return {
    name,
    uvOrigin,
    positions: new Float32Array(g.positions),
    normals: new Float32Array(g.normals),
    uvs: new Float32Array(g.uvs),
    indices: new Uint32Array(g.indices),
    exact,
    exactCorner,
    boundary: new Uint8Array(g.boundary),
    triangleSide,
  };
}

/**
 * Sphere band of radius `radius` (default 1), poles excluded: polar angle
 * theta = pi * (0.9 - 0.8 v) runs from 0.9 pi (v = 0) to 0.1 pi (v = 1), azimuth phi = 2 pi u.
 * 2n x n quads; the u = 0 / u = 1 seam is duplicated. Outward normals.
 */
export function sphere(opts: SurfaceOptions & { radius?: number }): SurfaceMesh {
  const R = opts.radius ?? 1;
  const origin = opts.uvOrigin ?? 'bottom-left';
  const g = emptyGrid();
  sampleGrid((a, b) => {
    const u = a, v = b;
    const th = Math.PI * (0.9 - 0.8 * v), ph = 2 * Math.PI * u;
    const st = Math.sin(th), ct = Math.cos(th), sp = Math.sin(ph), cp = Math.cos(ph);
    const dth = -0.8 * Math.PI, dph = 2 * Math.PI;
    return {
      p: [R * st * cp, R * st * sp, R * ct],
      n: [st * cp, st * sp, ct],
      u, v,
      pu: [-R * st * sp * dph, R * st * cp * dph, 0],
      pv: [R * ct * cp * dth, R * ct * sp * dth, -R * st * dth],
    };
  }, 2 * opts.n, opts.n, origin, g);
  return finish('sphere', origin, g);
}

/**
 * Open cylinder of radius 1 and height 2 around +z: phi = 2 pi u, z = 2v - 1.
 * 2n x n quads; the u seam is duplicated. Outward normals. Straight along v, so its only
 * curvature is around.
 */
export function cylinder(opts: SurfaceOptions): SurfaceMesh {
  const origin = opts.uvOrigin ?? 'bottom-left';
  const g = emptyGrid();
  sampleGrid((a, b) => {
    const u = a, v = b;
    const ph = 2 * Math.PI * u, sp = Math.sin(ph), cp = Math.cos(ph);
    return {
      p: [cp, sp, 2 * v - 1],
      n: [cp, sp, 0],
      u, v,
      pu: [-sp * 2 * Math.PI, cp * 2 * Math.PI, 0],
      pv: [0, 0, 2],
    };
  }, 2 * opts.n, opts.n, origin, g);
  return finish('cylinder', origin, g);
}

/**
 * Torus with major radius 1 and minor radius 0.35 around +z: phi = 2 pi u (around the
 * axis), psi = 2 pi v (around the tube). 2n x n quads; both seams duplicated. Outward
 * normals (N = (cos psi cos phi, cos psi sin phi, sin psi)).
 */
export function torus(opts: SurfaceOptions): SurfaceMesh {
  const origin = opts.uvOrigin ?? 'bottom-left';
  const Rm = 1, rm = 0.35;
  const g = emptyGrid();
  sampleGrid((a, b) => {
    const u = a, v = b;
    const ph = 2 * Math.PI * u, ps = 2 * Math.PI * v;
    const sph = Math.sin(ph), cph = Math.cos(ph), sps = Math.sin(ps), cps = Math.cos(ps);
    const rr = Rm + rm * cps;
    return {
      p: [rr * cph, rr * sph, rm * sps],
      n: [cps * cph, cps * sph, sps],
      u, v,
      pu: [-rr * sph * 2 * Math.PI, rr * cph * 2 * Math.PI, 0],
      pv: [-rm * sps * cph * 2 * Math.PI, -rm * sps * sph * 2 * Math.PI, rm * cps * 2 * Math.PI],
    };
  }, 2 * opts.n, opts.n, origin, g);
  return finish('torus', origin, g);
}

/**
 * A wavy sheet with a mirrored UV half, as a symmetric model is commonly unwrapped:
 *
 *      s = -1          s = 0           s = +1
 *   u:  1  <-- u = |s| --  0  -- u = |s| -->  1      (v = (y + 1) / 2 upward)
 *       [ left half: mirrored ][ right half ]
 *
 * Geometry: P(s, y) = (s, y, h(s, y)), h = 0.25 cos(1.3 s) sin(1.1 y) + 0.15 y^2 (even in s,
 * so the surface is smooth and symmetric across the seam), s, y in [-1, 1]; n x n quads per
 * half. On the right half dP/du = dP/ds (w = +1); on the left dP/du = -dP/ds (w = -1).
 * `seam: 'split'` (default) writes the seam column twice, once per side, as exporters do
 * (the copies have bitwise equal position, normal and uv); `seam: 'shared'` writes it once,
 * used by triangles of both sides; `exactCorner` then gives each seam corner its own side.
 */
export function mirroredSheet(opts: SurfaceOptions & { seam?: 'split' | 'shared' }): SurfaceMesh {
  const origin = opts.uvOrigin ?? 'bottom-left';
  const n = opts.n;
  const half = (side: number): Evaluator => (a, b) => {
    // a runs from the seam (a = 0) outward, so the grid's own parameter is u itself.
    const u = a, v = b;
    const s = side * u, y = 2 * v - 1;
    const c = Math.cos(1.3 * s), sn = Math.sin(1.3 * s), sy = Math.sin(1.1 * y), cy = Math.cos(1.1 * y);
    const h = 0.25 * c * sy + 0.15 * y * y;
    const hs = -0.25 * 1.3 * sn * sy;
    const hy = 0.25 * 1.1 * c * cy + 0.3 * y;
    // dP/ds = (1, 0, hs), dP/dy = (0, 1, hy); N = normalize(dP/ds x dP/dy) = normalize(-hs, -hy, 1).
    const nrm = normalize3(-hs, -hy, 1);
    // ds/du = side, dy/dv = 2.
    return {
      p: [s, y, h],
      n: nrm,
      u, v,
      pu: [side, 0, side * hs],
      pv: [0, 2, 2 * hy],
    };
  };
  const g = emptyGrid();
  sampleGrid(half(-1), n, n, origin, g);
  const leftVerts = g.positions.length / 3, leftTris = g.indices.length / 3;
  sampleGrid(half(1), n, n, origin, g);
  const sides: number[] = [];
  for (let t = 0; t < g.indices.length / 3; t++) sides.push(t < leftTris ? -1 : 1);
  // The seam column is i = 0 of each half; every seam vertex is a border of its half.
  if ((opts.seam ?? 'split') === 'split') return finish('mirroredSheet', origin, g, sides);

  // Shared seam: point the right half's seam vertices at the left half's, then compact.
  const row = n + 1;
  const remap = new Int32Array(g.positions.length / 3);
  for (let v = 0; v < remap.length; v++) remap[v] = v;
  for (let j = 0; j <= n; j++) remap[leftVerts + j * row] = j * row;
  const keep: number[] = [];
  const newIndex = new Int32Array(remap.length).fill(-1);
  for (let v = 0; v < remap.length; v++) {
    if (remap[v] === v) { newIndex[v] = keep.length; keep.push(v); }
  }
  const out = emptyGrid();
  for (const v of keep) {
    out.positions.push(g.positions[v * 3], g.positions[v * 3 + 1], g.positions[v * 3 + 2]);
    out.normals.push(g.normals[v * 3], g.normals[v * 3 + 1], g.normals[v * 3 + 2]);
    out.uvs.push(g.uvs[v * 2], g.uvs[v * 2 + 1]);
    out.tangent.push(g.tangent[v * 3], g.tangent[v * 3 + 1], g.tangent[v * 3 + 2]);
    out.w.push(g.w[v]);
    out.wAsStored.push(g.wAsStored[v]);
    out.boundary.push(g.boundary[v]);
  }
  for (const v of g.indices) out.indices.push(newIndex[remap[v]]);
  // Corner frames come from the unmerged grid, so each seam corner keeps its side's frame.
  return finish('mirroredSheet-shared', origin, out, sides, g);
}

/** Deterministic 32-bit PRNG (mulberry32); returns floats in [0, 1). */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** An indexed mesh without exact frames. */
export interface PlainMesh {
  name: string;
  uvOrigin: UvOrigin;
  positions: Float32Array;
  normals: Float32Array;
  uvs: Float32Array;
  indices: Uint32Array;
}

/**
 * A scan-like noisy height field over [-1, 1]^2: (n+1)^2 vertices, interior vertices jittered
 * in x and y by up to 0.3 of the spacing, height = smooth waves plus uniform noise of
 * `noise` times the spacing (default 0.5), quad diagonals chosen at random. UVs are the
 * planar projection ((x + 1) / 2, (y + 1) / 2) with v upward, plus a smooth warp that keeps
 * every UV triangle positively oriented; 'top-left' stores 1 - v. Normals are the
 * angle-weighted average of the face normals (no analytic frame exists). Fully determined
 * by `seed`.
 */
export function noisyScan(opts: { n: number; seed?: number; noise?: number; uvOrigin?: UvOrigin }): PlainMesh {
  const n = opts.n;
  const rand = mulberry32(opts.seed ?? 1);
  const noise = opts.noise ?? 0.5;
  const origin = opts.uvOrigin ?? 'bottom-left';
  const h = 2 / n;
  const vc = (n + 1) * (n + 1);
  const pos = new Float64Array(vc * 3);
  const uvs = new Float32Array(vc * 2);
  for (let j = 0; j <= n; j++) {
    for (let i = 0; i <= n; i++) {
      const v = j * (n + 1) + i;
      const inner = i > 0 && i < n && j > 0 && j < n;
      const x = -1 + i * h + (inner ? (rand() - 0.5) * 0.6 * h : 0);
      const y = -1 + j * h + (inner ? (rand() - 0.5) * 0.6 * h : 0);
      const z = 0.2 * Math.sin(2 * x) * Math.cos(3 * y) + 0.1 * x * y + (rand() - 0.5) * noise * h;
      pos[v * 3] = x; pos[v * 3 + 1] = y; pos[v * 3 + 2] = z;
      // Warp: u' = u + 0.03 sin(pi v) keeps du'/du = 1, so orientation is preserved.
      const u0 = (x + 1) / 2, v0 = (y + 1) / 2;
      const uu = u0 + 0.03 * Math.sin(Math.PI * v0);
      uvs[v * 2] = uu;
      uvs[v * 2 + 1] = origin === 'top-left' ? 1 - v0 : v0;
    }
  }
  const indices = new Uint32Array(n * n * 6);
  let k = 0;
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      const a = j * (n + 1) + i, b = a + 1, c = a + n + 1, d = c + 1;
      // Counter-clockwise seen from +z (the planar projection is orientation preserving).
      if (rand() < 0.5) {
        indices[k++] = a; indices[k++] = b; indices[k++] = d;
        indices[k++] = a; indices[k++] = d; indices[k++] = c;
      } else {
        indices[k++] = a; indices[k++] = b; indices[k++] = c;
        indices[k++] = b; indices[k++] = d; indices[k++] = c;
      }
    }
  }
  const positions = new Float32Array(pos);
  // Angle-weighted vertex normals from the float32 positions.
  const acc = new Float64Array(vc * 3);
  for (let t = 0; t < indices.length; t += 3) {
    for (let c = 0; c < 3; c++) {
      const i0 = indices[t + c], i1 = indices[t + (c + 1) % 3], i2 = indices[t + (c + 2) % 3];
      const ax = positions[i1 * 3] - positions[i0 * 3], ay = positions[i1 * 3 + 1] - positions[i0 * 3 + 1];
      const az = positions[i1 * 3 + 2] - positions[i0 * 3 + 2];
      const bx = positions[i2 * 3] - positions[i0 * 3], by = positions[i2 * 3 + 1] - positions[i0 * 3 + 1];
      const bz = positions[i2 * 3 + 2] - positions[i0 * 3 + 2];
      const nx = ay * bz - az * by, ny = az * bx - ax * bz, nz = ax * by - ay * bx;
      const nl = Math.hypot(nx, ny, nz);
      const ang = Math.atan2(nl, ax * bx + ay * by + az * bz);
      acc[i0 * 3] += (nx / nl) * ang; acc[i0 * 3 + 1] += (ny / nl) * ang; acc[i0 * 3 + 2] += (nz / nl) * ang;
    }
  }
  const normals = new Float32Array(vc * 3);
  for (let v = 0; v < vc; v++) {
    const l = Math.hypot(acc[v * 3], acc[v * 3 + 1], acc[v * 3 + 2]);
    normals[v * 3] = acc[v * 3] / l; normals[v * 3 + 1] = acc[v * 3 + 1] / l; normals[v * 3 + 2] = acc[v * 3 + 2] / l;
  }
  return { name: 'noisyScan', uvOrigin: origin, positions, normals, uvs, indices };
}
