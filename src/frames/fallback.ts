/**
 * Based on: Gram-Schmidt orthogonalisation. The documented fallback for a vertex whose
 * texture coordinates give no tangent direction (degenerate UVs, no contributing triangle):
 * the first of the axes +X, +Y, +Z that is not nearly parallel to the normal, made orthogonal
 * to it. Handedness is +1. With a zero or invalid normal the tangent is +X.
 */

/**
 * Writes a unit tangent orthogonal to (nx, ny, nz) and w = +1 into out[o..o+3].
 * Preconditions: `out` has room for four floats at `o`.
 */
export function writeFallbackTangent(out: Float32Array, o: number, nx: number, ny: number, nz: number): void {
  const nl = Math.sqrt(nx * nx + ny * ny + nz * nz);
  if (!(nl > 1e-20) || !Number.isFinite(nl)) {
    out[o] = 1; out[o + 1] = 0; out[o + 2] = 0; out[o + 3] = 1;
    return;
  }
  nx /= nl; ny /= nl; nz /= nl;
  // Axis least aligned with n beyond a 0.9 cosine: +X first, then +Y, then +Z.
  let ax = 1, ay = 0, az = 0;
  if (Math.abs(nx) > 0.9) {
    ax = 0; ay = 1;
    if (Math.abs(ny) > 0.9) { ay = 0; az = 1; }
  }
  const d = ax * nx + ay * ny + az * nz;
  let tx = ax - nx * d, ty = ay - ny * d, tz = az - nz * d;
  const tl = Math.sqrt(tx * tx + ty * ty + tz * tz);
  tx /= tl; ty /= tl; tz /= tl;
  out[o] = tx; out[o + 1] = ty; out[o + 2] = tz; out[o + 3] = 1;
}
