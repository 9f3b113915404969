/**
 * Based on: Pineda 1988, "A Parallel Algorithm for Polygon Rasterization" (edge functions),
 * with the top-left fill rule of the Direct3D rasterisation rules and fixed-point sub-texel
 * vertex snapping (common practice in GPU rasterisers); texel centres and the top-left UV
 * origin of glTF 2.0 (specification, section 3.8.4.1 images / texture coordinates).
 *
 * UV space maps to the image as x = u * width, y = v * height (glTF: v = 0 is the top row),
 * and texel (x, y) is sampled at its centre ((x + 0.5) / width, (y + 0.5) / height).
 * Vertices are snapped to 1/256 of a texel and every edge function is evaluated in integer
 * arithmetic held exactly in float64 (all products stay below 2^52), so two triangles that
 * share an edge evaluate it as exact negatives and the fill rule gives each texel centre on it
 * to exactly one of them. UVs outside [0, 1] wrap: a triangle is rasterised once per integer
 * UV tile its bounding box touches, translated into the image, so [1, 2] lands on the same
 * texels as [0, 1] and a triangle crossing u = 1 covers both image borders.
 *
 * Output is spans: per covered row, the first and one-past-last texel and the barycentric
 * weights at the first texel's centre, with per-texel increments shared by the triangle.
 * Consumers loop over spans with plain index arithmetic (no per-texel objects or calls).
 */

/** Sub-texel precision of snapped vertices: 2^8 steps per texel. */
export const SUBTEXEL = 256;

/**
 * Most integer UV tiles one triangle may touch (its bounding box, columns x rows). A triangle
 * larger than this covers the whole image over and over; it is skipped and counted.
 */
export const MAX_TRIANGLE_TILES = 1024;

/**
 * Longest bounding-box side, in texels, of a rasterised triangle. Keeps every edge function
 * product below 2^52 so it is exact in float64; larger triangles are skipped and counted.
 */
export const MAX_TRIANGLE_EXTENT_TEXELS = 131072;

/** Largest |u * width * SUBTEXEL| (and v) accepted before snapping stops being exact. */
const MAX_SNAPPED = 2 ** 50;

/** Rasterisation outcome of one triangle. */
export const RASTER_OK = 0;
/** Zero UV area: covers no texel (not an error). */
export const RASTER_DEGENERATE = 1;
/** A UV is NaN or infinite, or too far from the origin to snap exactly. */
export const RASTER_NOT_FINITE = 2;
/** The triangle touches more than MAX_TRIANGLE_TILES tiles or is longer than MAX_TRIANGLE_EXTENT_TEXELS. */
export const RASTER_TOO_LARGE = 3;

/** Spans of one rasterised triangle; reused from triangle to triangle. */
export interface SpanBuffer {
  /** Spans written by the last call. */
  count: number;
  /** Row of each span. */
  y: Int32Array;
  /** First covered texel of each span. */
  x0: Int32Array;
  /** One past the last covered texel of each span. */
  x1: Int32Array;
  /** Three per span: the weights of the triangle's vertices 0, 1, 2 at the centre of texel (x0, y). */
  w: Float64Array;
  /** Three: how the weights change from one texel to the next along a row. */
  dw: Float64Array;
}

/** Allocates a span buffer (it grows when a triangle needs more spans). */
export function createSpanBuffer(capacity = 1024): SpanBuffer {
  const c = Math.max(16, capacity | 0);
  return { count: 0, y: new Int32Array(c), x0: new Int32Array(c), x1: new Int32Array(c), w: new Float64Array(c * 3), dw: new Float64Array(3) };
}

function growSpans(out: SpanBuffer): void {
  const c = out.y.length * 2;
  const y = new Int32Array(c), x0 = new Int32Array(c), x1 = new Int32Array(c), w = new Float64Array(c * 3);
  y.set(out.y); x0.set(out.x0); x1.set(out.x1); w.set(out.w);
  out.y = y; out.x0 = x0; out.x1 = x1; out.w = w;
}

/**
 * Rasterises one UV triangle (glTF UVs, v = 0 at the top row) into `out` over a width x
 * height image, wrapping UVs outside [0, 1] into the image. Writes out.count spans and
 * out.dw; the weights sum to 1 at every texel centre. Returns RASTER_OK, or RASTER_DEGENERATE
 * (zero UV area, no spans), RASTER_NOT_FINITE or RASTER_TOO_LARGE (skipped, no spans).
 * Preconditions: width and height are integers in [1, 32768].
 */
export function rasterizeTriangle(
  out: SpanBuffer,
  u0: number, v0: number, u1: number, v1: number, u2: number, v2: number,
  width: number, height: number,
): number {
  out.count = 0;
  const sx = width * SUBTEXEL, sy = height * SUBTEXEL;
  let X0 = Math.round(u0 * sx), Y0 = Math.round(v0 * sy);
  let X1 = Math.round(u1 * sx), Y1 = Math.round(v1 * sy);
  let X2 = Math.round(u2 * sx), Y2 = Math.round(v2 * sy);
  // NaN fails every comparison, so `!(|x| <= max)` catches it as well as infinities.
  if (!(Math.abs(X0) <= MAX_SNAPPED && Math.abs(Y0) <= MAX_SNAPPED && Math.abs(X1) <= MAX_SNAPPED &&
    Math.abs(Y1) <= MAX_SNAPPED && Math.abs(X2) <= MAX_SNAPPED && Math.abs(Y2) <= MAX_SNAPPED)) return RASTER_NOT_FINITE;

  let minX = X0 < X1 ? X0 : X1; if (X2 < minX) minX = X2;
  let maxX = X0 > X1 ? X0 : X1; if (X2 > maxX) maxX = X2;
  let minY = Y0 < Y1 ? Y0 : Y1; if (Y2 < minY) minY = Y2;
  let maxY = Y0 > Y1 ? Y0 : Y1; if (Y2 > maxY) maxY = Y2;
  const limit = MAX_TRIANGLE_EXTENT_TEXELS * SUBTEXEL;
  if (maxX - minX > limit || maxY - minY > limit) return RASTER_TOO_LARGE;
  // Move the triangle to the tile of its bounding-box corner (exact integer shifts), so all
  // later coordinates are small.
  const shiftX = Math.floor(minX / sx) * sx, shiftY = Math.floor(minY / sy) * sy;
  X0 -= shiftX; X1 -= shiftX; X2 -= shiftX; minX -= shiftX; maxX -= shiftX;
  Y0 -= shiftY; Y1 -= shiftY; Y2 -= shiftY; minY -= shiftY; maxY -= shiftY;
  const tilesX = Math.floor(maxX / sx) + 1, tilesY = Math.floor(maxY / sy) + 1;
  if (tilesX * tilesY > MAX_TRIANGLE_TILES) return RASTER_TOO_LARGE;

  const area2 = (X1 - X0) * (Y2 - Y0) - (Y1 - Y0) * (X2 - X0);
  if (area2 === 0) return RASTER_DEGENERATE;

  // For each vertex k, the opposite edge a -> b directed so that the edge function
  // E(p) = dx * (py - ay) - dy * (px - ax) is +|area2| at vertex k (positive inside).
  let a0x: number, a0y: number, d0x: number, d0y: number; // opposite vertex 0
  let a1x: number, a1y: number, d1x: number, d1y: number; // opposite vertex 1
  let a2x: number, a2y: number, d2x: number, d2y: number; // opposite vertex 2
  if (area2 > 0) {
    a0x = X1; a0y = Y1; d0x = X2 - X1; d0y = Y2 - Y1;
    a1x = X2; a1y = Y2; d1x = X0 - X2; d1y = Y0 - Y2;
    a2x = X0; a2y = Y0; d2x = X1 - X0; d2y = Y1 - Y0;
  } else {
    a0x = X2; a0y = Y2; d0x = X1 - X2; d0y = Y1 - Y2;
    a1x = X0; a1y = Y0; d1x = X2 - X0; d1y = Y2 - Y0;
    a2x = X1; a2y = Y1; d2x = X0 - X1; d2y = Y0 - Y1;
  }
  const area = area2 > 0 ? area2 : -area2;
  // Top-left rule (y grows downward): a texel centre exactly on an edge belongs to the
  // triangle when the edge is a top edge (horizontal, interior below: dy = 0, dx > 0) or a
  // left edge (interior to its right: dy < 0). Edge values are integers, so "> 0" is ">= 1".
  const t0 = d0y < 0 || (d0y === 0 && d0x > 0) ? 0 : 1;
  const t1 = d1y < 0 || (d1y === 0 && d1x > 0) ? 0 : 1;
  const t2 = d2y < 0 || (d2y === 0 && d2x > 0) ? 0 : 1;
  // Change of each edge function per texel step in x.
  const s0 = -d0y * SUBTEXEL, s1 = -d1y * SUBTEXEL, s2 = -d2y * SUBTEXEL;
  out.dw[0] = s0 / area; out.dw[1] = s1 / area; out.dw[2] = s2 / area;

  const half = SUBTEXEL / 2;
  for (let ty = 0; ty < tilesY; ty++) {
    const oy = ty * sy;
    // Rows whose centre lies inside [minY, maxY] after moving the tile to the image.
    let yLo = Math.ceil((minY - oy - half) / SUBTEXEL), yHi = Math.floor((maxY - oy - half) / SUBTEXEL);
    if (yLo < 0) yLo = 0;
    if (yHi > height - 1) yHi = height - 1;
    for (let tx = 0; tx < tilesX; tx++) {
      const ox = tx * sx;
      for (let y = yLo; y <= yHi; y++) {
        const py = y * SUBTEXEL + half + oy;
        // Edge values at the centre of texel x = 0 of this row (px = half + ox).
        const c0 = d0x * (py - a0y) - d0y * (half + ox - a0x);
        const c1 = d1x * (py - a1y) - d1y * (half + ox - a1x);
        const c2 = d2x * (py - a2y) - d2y * (half + ox - a2x);
        let lo = 0, hi = width - 1;
        // Edge k holds where c + s * x >= t.
        if (s0 > 0) { const m = Math.ceil((t0 - c0) / s0); if (m > lo) lo = m; }
        else if (s0 < 0) { const m = Math.floor((c0 - t0) / -s0); if (m < hi) hi = m; }
        else if (c0 < t0) continue;
        if (s1 > 0) { const m = Math.ceil((t1 - c1) / s1); if (m > lo) lo = m; }
        else if (s1 < 0) { const m = Math.floor((c1 - t1) / -s1); if (m < hi) hi = m; }
        else if (c1 < t1) continue;
        if (s2 > 0) { const m = Math.ceil((t2 - c2) / s2); if (m > lo) lo = m; }
        else if (s2 < 0) { const m = Math.floor((c2 - t2) / -s2); if (m < hi) hi = m; }
        else if (c2 < t2) continue;
        if (lo > hi) continue;
        if (out.count === out.y.length) growSpans(out);
        const k = out.count++;
        out.y[k] = y;
        out.x0[k] = lo;
        out.x1[k] = hi + 1;
        out.w[k * 3] = (c0 + s0 * lo) / area;
        out.w[k * 3 + 1] = (c1 + s1 * lo) / area;
        out.w[k * 3 + 2] = (c2 + s2 * lo) / area;
      }
    }
  }
  return RASTER_OK;
}

/**
 * The work rasterizeTriangle will do for this triangle, in texel steps: the texels it covers
 * (its snapped UV area, which wrapping does not change) plus the rows it visits in every tile
 * (each costs a few edge evaluations even where nothing is covered). 0 for triangles it skips
 * (non-finite, too large) or whose area is zero. Cheap: no spans are made. Preconditions as
 * rasterizeTriangle.
 */
export function rasterWork(
  u0: number, v0: number, u1: number, v1: number, u2: number, v2: number, width: number, height: number,
): number {
  const sx = width * SUBTEXEL, sy = height * SUBTEXEL;
  const X0 = Math.round(u0 * sx), Y0 = Math.round(v0 * sy);
  const X1 = Math.round(u1 * sx), Y1 = Math.round(v1 * sy);
  const X2 = Math.round(u2 * sx), Y2 = Math.round(v2 * sy);
  if (!(Math.abs(X0) <= MAX_SNAPPED && Math.abs(Y0) <= MAX_SNAPPED && Math.abs(X1) <= MAX_SNAPPED &&
    Math.abs(Y1) <= MAX_SNAPPED && Math.abs(X2) <= MAX_SNAPPED && Math.abs(Y2) <= MAX_SNAPPED)) return 0;
  let minX = X0 < X1 ? X0 : X1; if (X2 < minX) minX = X2;
  let maxX = X0 > X1 ? X0 : X1; if (X2 > maxX) maxX = X2;
  let minY = Y0 < Y1 ? Y0 : Y1; if (Y2 < minY) minY = Y2;
  let maxY = Y0 > Y1 ? Y0 : Y1; if (Y2 > maxY) maxY = Y2;
  const limit = MAX_TRIANGLE_EXTENT_TEXELS * SUBTEXEL;
  if (maxX - minX > limit || maxY - minY > limit) return 0;
  const shiftX = Math.floor(minX / sx) * sx, shiftY = Math.floor(minY / sy) * sy;
  const tilesX = Math.floor((maxX - shiftX) / sx) + 1, tilesY = Math.floor((maxY - shiftY) / sy) + 1;
  if (tilesX * tilesY > MAX_TRIANGLE_TILES) return 0;
  const area2 = (X1 - X0) * (Y2 - Y0) - (Y1 - Y0) * (X2 - X0);
  if (area2 === 0) return 0;
  const texels = Math.abs(area2) / (2 * SUBTEXEL * SUBTEXEL);
  // Rows visited: per tile row at most the image's height and the box's height, times the tile columns.
  const boxRows = (maxY - minY) / SUBTEXEL + 1;
  const rows = Math.min(boxRows, tilesY * height) * tilesX;
  return texels + rows;
}

/** Counts of `countCoverage`. */
export interface CoverageStats {
  /** Texels covered at least once. */
  covered: number;
  /** Triangles with zero UV area. */
  degenerate: number;
  /** Triangles skipped for non-finite or huge UVs. */
  skipped: number;
}

/**
 * Adds 1 to `counts[y * width + x]` for every time a triangle covers texel (x, y): with a
 * consistent fill rule a UV layout without overlaps covers each texel at most once, and a
 * layout that tiles the square exactly once covers every texel exactly once. `uvs` holds two
 * floats per vertex, `indices` three per triangle. Returns coverage counts.
 * Preconditions: counts.length === width * height; indices below the vertex count.
 */
export function countCoverage(
  counts: Uint32Array, uvs: Float32Array, indices: Uint32Array, triangleCount: number, width: number, height: number,
): CoverageStats {
  const spans = createSpanBuffer();
  let degenerate = 0, skipped = 0;
  for (let t = 0; t < triangleCount; t++) {
    const a = indices[t * 3] * 2, b = indices[t * 3 + 1] * 2, c = indices[t * 3 + 2] * 2;
    const r = rasterizeTriangle(spans, uvs[a], uvs[a + 1], uvs[b], uvs[b + 1], uvs[c], uvs[c + 1], width, height);
    if (r === RASTER_DEGENERATE) degenerate++;
    else if (r !== RASTER_OK) skipped++;
    for (let s = 0; s < spans.count; s++) {
      const row = spans.y[s] * width;
      for (let x = spans.x0[s]; x < spans.x1[s]; x++) counts[row + x]++;
    }
  }
  let covered = 0;
  for (let i = 0; i < counts.length; i++) if (counts[i] > 0) covered++;
  return { covered, degenerate, skipped };
}
