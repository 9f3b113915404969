/**
 * Based on: KHR_texture_transform extension specification (ratified): the sampled coordinates
 * are uv' = T(offset) * R(rotation) * S(scale) * (u, v, 1), with the GLSL rotation matrix
 * mat3(cos r, -sin r, 0, sin r, cos r, 0, 0, 0, 1) (column-major), so
 *   u' =  cos(r) * sx * u + sin(r) * sy * v + ox
 *   v' = -sin(r) * sx * u + cos(r) * sy * v + oy
 * The 3 x 3 matrix T * R * S is composed here in float64, column-major like GLSL (the
 * extension's rotation by r is a counter-clockwise rotation by -r), by the same products a
 * general 3 x 3 library makes (translation, then rotate, then scale; every product written
 * out, the ones with 0 and 1 included, so the rounding is that of the general products).
 */

/** A column-major 3 x 3 matrix (9 numbers). */
export type Mat3 = [number, number, number, number, number, number, number, number, number];

/** A KHR_texture_transform: offset, rotation (radians), scale; defaults 0, 0, 1. */
export interface UvTransform {
  offset: [number, number];
  rotation: number;
  scale: [number, number];
}

function pair(v: unknown, fallback: [number, number]): [number, number] {
  if (Array.isArray(v) && v.length === 2 && v.every((x) => typeof x === 'number' && Number.isFinite(x))) return [v[0], v[1]];
  return fallback;
}

/**
 * The KHR_texture_transform of a textureInfo object, or null when it has none or it leaves
 * the coordinates unchanged. Malformed fields take their defaults.
 */
export function uvTransformOf(textureInfo: any): UvTransform | null {
  const ext = textureInfo?.extensions?.KHR_texture_transform;
  if (!ext || typeof ext !== 'object') return null;
  const offset = pair(ext.offset, [0, 0]);
  const scale = pair(ext.scale, [1, 1]);
  const rotation = typeof ext.rotation === 'number' && Number.isFinite(ext.rotation) ? ext.rotation : 0;
  if (offset[0] === 0 && offset[1] === 0 && scale[0] === 1 && scale[1] === 1 && rotation === 0) return null;
  return { offset, rotation, scale };
}

/**
 * True when the transform changes tangent frames: a rotation or a negative scale. An offset
 * moves the map and a positive scale (even a non-uniform one) stretches it along u and v, so
 * the directions of increasing u and v, hence the frames, stay the same.
 */
export function changesFrames(t: UvTransform | null): boolean {
  if (!t) return false;
  return t.rotation !== 0 || t.scale[0] < 0 || t.scale[1] < 0;
}

/**
 * The transform as a column-major 3 x 3 matrix T * R * S (float64):
 * uv' = (m[0] u + m[3] v + m[6], m[1] u + m[4] v + m[7]).
 */
export function uvTransformMatrix(t: UvTransform): Mat3 {
  // T: the translation by the offset.
  const a00 = 1, a01 = 0, a02 = 0, a10 = 0, a11 = 1, a12 = 0, a20 = t.offset[0], a21 = t.offset[1], a22 = 1;
  // T * R(-rotation).
  const s = Math.sin(-t.rotation), c = Math.cos(-t.rotation);
  const r00 = c * a00 + s * a10, r01 = c * a01 + s * a11, r02 = c * a02 + s * a12;
  const r10 = c * a10 - s * a00, r11 = c * a11 - s * a01, r12 = c * a12 - s * a02;
  // (T * R) * S(scale).
  const x = t.scale[0], y = t.scale[1];
  return [x * r00, x * r01, x * r02, y * r10, y * r11, y * r12, a20, a21, a22];
}

/**
 * Writes the transformed coordinates of `count` uv pairs of `uvs` into `out` (may be `uvs`).
 * Computed in float64, stored as float32. Preconditions: both hold 2 * count floats.
 */
export function applyUvTransform(out: Float32Array, uvs: Float32Array, count: number, t: UvTransform): void {
  const m = uvTransformMatrix(t);
  const a = m[0], b = m[3], d = m[1], e = m[4];
  const ox = m[6], oy = m[7];
  for (let i = 0; i < count; i++) {
    const u = uvs[2 * i], v = uvs[2 * i + 1];
    out[2 * i] = a * u + b * v + ox;
    out[2 * i + 1] = d * u + e * v + oy;
  }
}
