/**
 * Based on: half-space (edge function) triangle rasterisation (Pineda 1988, "A Parallel
 * Algorithm for Polygon Rasterization") on a fixed-point grid, with the top-left fill rule of
 * Direct3D / OpenGL practice (a sample on a shared edge belongs to exactly one triangle), a
 * z-buffer, and perspective-correct barycentrics (interpolate l_i / w_i and normalise; Heckbert
 * and Moreton 1991, "Interpolation for Polygon Texture Mapping and Shading").
 *
 * The visibility pass: per sample, the nearest triangle and its barycentrics. Shading happens
 * afterwards, once per visible sample.
 */

/** Sub-sample precision of snapped vertex positions: 1/256 of a sample. */
export const SUBPIXEL = 256;

/** Per sample of the picture: the nearest triangle and where in it. */
export interface VisibilityBuffer {
  width: number;
  height: number;
  /** NDC depth (smaller is nearer); +Infinity where nothing was drawn. */
  depth: Float32Array;
  /** Instance of the visible triangle, or -1. */
  instance: Int32Array;
  /** Triangle index within its primitive, or -1. */
  triangle: Int32Array;
  /** Perspective-correct barycentric weights of the triangle's corners 1 and 2 (corner 0: 1 - b1 - b2). */
  b1: Float32Array;
  b2: Float32Array;
}

/** An empty visibility buffer of width x height samples. */
export function createVisibility(width: number, height: number): VisibilityBuffer {
  const n = width * height;
  const depth = new Float32Array(n).fill(Infinity);
  return { width, height, depth, instance: new Int32Array(n).fill(-1), triangle: new Int32Array(n).fill(-1), b1: new Float32Array(n), b2: new Float32Array(n) };
}

/** Empties `buf` for another view (as createVisibility leaves it), reusing its arrays. */
export function clearVisibility(buf: VisibilityBuffer): void {
  buf.depth.fill(Infinity);
  buf.instance.fill(-1);
  buf.triangle.fill(-1);
}

/**
 * Rasterises the triangles of one instance into `buf`. `screen` holds 4 values per vertex:
 * x and y in samples (y down), NDC z, and 1/w. A triangle is front-facing when its signed
 * screen area has the sign `frontSign` (-1 for counter-clockwise winding in NDC with a
 * positive-determinant transform: glTF 2.0, 3.7.4); with `cullBack` its back faces are not
 * drawn. `backFacing[t]` is set to 1 for back-facing triangles drawn, 0 otherwise. Triangles
 * with a non-finite corner or no area are skipped. A sample takes the nearest triangle; on
 * equal depth the one drawn first stays, so the result depends only on the order of the input.
 * Returns the number of triangles drawn.
 * Preconditions: indices hold 3 * triangleCount entries below screen.length / 4; backFacing
 * holds triangleCount entries.
 */
export function rasterizeInstance(
  buf: VisibilityBuffer,
  screen: Float64Array,
  indices: Uint32Array,
  triangleCount: number,
  instanceId: number,
  frontSign: number,
  cullBack: boolean,
  backFacing: Uint8Array,
): number {
  const W = buf.width, H = buf.height;
  const depth = buf.depth, inst = buf.instance, tris = buf.triangle, B1 = buf.b1, B2 = buf.b2;
  const S = SUBPIXEL, half = S / 2;
  let drawn = 0;
  for (let t = 0; t < triangleCount; t++) {
    backFacing[t] = 0;
    const i0 = indices[t * 3] * 4, i1o = indices[t * 3 + 1] * 4, i2o = indices[t * 3 + 2] * 4;
    const sx0 = screen[i0], sy0 = screen[i0 + 1], sx1 = screen[i1o], sy1 = screen[i1o + 1], sx2 = screen[i2o], sy2 = screen[i2o + 1];
    if (sx0 - sx0 !== 0 || sy0 - sy0 !== 0 || sx1 - sx1 !== 0 || sy1 - sy1 !== 0 || sx2 - sx2 !== 0 || sy2 - sy2 !== 0) continue;
    const x0 = Math.round(sx0 * S), y0 = Math.round(sy0 * S);
    let x1 = Math.round(sx1 * S), y1 = Math.round(sy1 * S);
    let x2 = Math.round(sx2 * S), y2 = Math.round(sy2 * S);
    let area = (x1 - x0) * (y2 - y0) - (y1 - y0) * (x2 - x0);
    if (area === 0) continue;
    const back = area * frontSign < 0;
    if (back && cullBack) continue;
    if (back) backFacing[t] = 1;
    // Orient so that the inside is where all three edge functions are positive.
    let swapped = false;
    let z1 = screen[i1o + 2], z2 = screen[i2o + 2], w1 = screen[i1o + 3], w2 = screen[i2o + 3];
    if (area < 0) {
      swapped = true;
      let tmp = x1; x1 = x2; x2 = tmp;
      tmp = y1; y1 = y2; y2 = tmp;
      tmp = z1; z1 = z2; z2 = tmp;
      tmp = w1; w1 = w2; w2 = tmp;
      area = -area;
    }
    const z0 = screen[i0 + 2], w0 = screen[i0 + 3];
    // Sample (px, py) sits at ((px + 0.5) * S, (py + 0.5) * S).
    const minX = Math.max(0, Math.ceil(Math.min(x0, x1, x2) / S - 0.5));
    const maxX = Math.min(W - 1, Math.floor(Math.max(x0, x1, x2) / S - 0.5));
    const minY = Math.max(0, Math.ceil(Math.min(y0, y1, y2) / S - 0.5));
    const maxY = Math.min(H - 1, Math.floor(Math.max(y0, y1, y2) / S - 0.5));
    if (minX > maxX || minY > maxY) continue;
    drawn++;
    // Edge a -> b: E(p) = (bx - ax) (py - ay) - (by - ay) (px - ax). With y down and the inside
    // positive, a top edge has dy == 0 and dx > 0, a left edge dy < 0: samples exactly on those
    // belong to this triangle (bias 0), on the others to the neighbour (bias -1).
    const dx12 = x2 - x1, dy12 = y2 - y1, dx20 = x0 - x2, dy20 = y0 - y2, dx01 = x1 - x0, dy01 = y1 - y0;
    const bias0 = dy12 < 0 || (dy12 === 0 && dx12 > 0) ? 0 : -1;
    const bias1 = dy20 < 0 || (dy20 === 0 && dx20 > 0) ? 0 : -1;
    const bias2 = dy01 < 0 || (dy01 === 0 && dx01 > 0) ? 0 : -1;
    const px0 = minX * S + half, py0 = minY * S + half;
    let r0 = dx12 * (py0 - y1) - dy12 * (px0 - x1);
    let r1 = dx20 * (py0 - y2) - dy20 * (px0 - x2);
    let r2 = dx01 * (py0 - y0) - dy01 * (px0 - x0);
    const sx12 = -dy12 * S, sx20 = -dy20 * S, sx01 = -dy01 * S;
    const sy12 = dx12 * S, sy20 = dx20 * S, sy01 = dx01 * S;
    const inv = 1 / area;
    for (let py = minY; py <= maxY; py++) {
      let e0 = r0, e1 = r1, e2 = r2;
      let o = py * W + minX;
      for (let px = minX; px <= maxX; px++, o++, e0 += sx12, e1 += sx20, e2 += sx01) {
        if (e0 + bias0 < 0 || e1 + bias1 < 0 || e2 + bias2 < 0) continue;
        const l0 = e0 * inv, l1 = e1 * inv, l2 = e2 * inv;
        const z = l0 * z0 + l1 * z1 + l2 * z2;
        if (!(z < depth[o])) continue;
        depth[o] = z;
        const q0 = l0 * w0, q1 = l1 * w1, q2 = l2 * w2;
        const s = q0 + q1 + q2;
        inst[o] = instanceId;
        tris[o] = t;
        if (swapped) { B1[o] = q2 / s; B2[o] = q1 / s; }
        else { B1[o] = q1 / s; B2[o] = q2 / s; }
      }
      r0 += sy12; r1 += sy20; r2 += sy01;
    }
  }
  return drawn;
}
