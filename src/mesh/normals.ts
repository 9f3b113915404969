/**
 * Based on: glTF 2.0 specification, section 3.7.2.1 ("When normals are not specified, client
 * implementations MUST calculate flat normals") for `flat`; area-weighted face-normal
 * averaging within a crease angle for `smooth` (common practice, no single source).
 */
import { splitByCornerValues } from './splitCorners.js';
import { weldPositions } from './weld.js';
import { ZERO_LENGTH } from './tolerances.js';

/** Generated normals over a re-indexed mesh. */
export interface GeneratedNormals {
  /** 3 floats per output vertex, unit length. */
  normals: Float32Array;
  indices: Uint32Array;
  /** For each output vertex, the input vertex it copies. */
  sourceVertex: Uint32Array;
  /** Triangles with no area whose corners got the fallback normal +Z. */
  fallbackTriangles: number;
}

/**
 * Generates per-corner normals and splits vertices where corners differ.
 * `mode` 'flat' gives every corner its face normal; 'smooth' averages the area-weighted face
 * normals of the triangles around the same position whose face normal lies within
 * `smoothAngleDeg` of the corner's own face. A triangle with no area gets +Z (counted).
 * Returns the normals per output vertex, new indices and the source map.
 * Preconditions: indices hold 3 * triangleCount entries below vertexCount.
 */
export function generateNormals(
  indices: Uint32Array,
  positions: Float32Array,
  triangleCount: number,
  vertexCount: number,
  mode: 'flat' | 'smooth',
  smoothAngleDeg: number,
): GeneratedNormals {
  const face = new Float64Array(triangleCount * 3); // unnormalised: |cross| = 2 * area
  let fallback = 0;
  for (let t = 0; t < triangleCount; t++) {
    const a = indices[t * 3], b = indices[t * 3 + 1], c = indices[t * 3 + 2];
    const ax = positions[a * 3], ay = positions[a * 3 + 1], az = positions[a * 3 + 2];
    const e1x = positions[b * 3] - ax, e1y = positions[b * 3 + 1] - ay, e1z = positions[b * 3 + 2] - az;
    const e2x = positions[c * 3] - ax, e2y = positions[c * 3 + 1] - ay, e2z = positions[c * 3 + 2] - az;
    const nx = e1y * e2z - e1z * e2y, ny = e1z * e2x - e1x * e2z, nz = e1x * e2y - e1y * e2x;
    face[t * 3] = nx; face[t * 3 + 1] = ny; face[t * 3 + 2] = nz;
    const l = Math.sqrt(nx * nx + ny * ny + nz * nz);
    if (!(l > ZERO_LENGTH) || !Number.isFinite(l)) fallback++;
  }
  const cornerCount = triangleCount * 3;
  const corner = new Float32Array(cornerCount * 3);
  if (mode === 'flat') {
    for (let t = 0; t < triangleCount; t++) {
      writeUnit(corner, t * 9, face[t * 3], face[t * 3 + 1], face[t * 3 + 2]);
      corner[t * 9 + 3] = corner[t * 9 + 6] = corner[t * 9];
      corner[t * 9 + 4] = corner[t * 9 + 7] = corner[t * 9 + 1];
      corner[t * 9 + 5] = corner[t * 9 + 8] = corner[t * 9 + 2];
    }
  } else {
    const cosLimit = Math.cos((smoothAngleDeg * Math.PI) / 180);
    // Corners around each distinct position, as compressed sparse rows.
    const rep = new Uint32Array(vertexCount);
    weldPositions(rep, positions, vertexCount);
    const start = new Uint32Array(vertexCount + 1);
    for (let c = 0; c < cornerCount; c++) start[rep[indices[c]] + 1]++;
    for (let v = 0; v < vertexCount; v++) start[v + 1] += start[v];
    const fill = start.slice(0, vertexCount);
    const around = new Uint32Array(cornerCount);
    for (let c = 0; c < cornerCount; c++) around[fill[rep[indices[c]]]++] = c;
    for (let c = 0; c < cornerCount; c++) {
      const t = (c / 3) | 0;
      const fx = face[t * 3], fy = face[t * 3 + 1], fz = face[t * 3 + 2];
      const fl = Math.sqrt(fx * fx + fy * fy + fz * fz);
      const p = rep[indices[c]];
      let sx = 0, sy = 0, sz = 0;
      for (let k = start[p]; k < start[p + 1]; k++) {
        const u = (around[k] / 3) | 0;
        const gx = face[u * 3], gy = face[u * 3 + 1], gz = face[u * 3 + 2];
        const gl = Math.sqrt(gx * gx + gy * gy + gz * gz);
        if (u !== t && (fl > 0 && gl > 0) && (fx * gx + fy * gy + fz * gz) < cosLimit * fl * gl) continue;
        sx += gx; sy += gy; sz += gz;
      }
      writeUnit(corner, c * 3, sx, sy, sz);
    }
  }
  const s = splitByCornerValues(corner, 3, indices, vertexCount);
  // Input vertices no triangle uses keep a valid normal.
  for (let v = 0; v < vertexCount; v++) if (!s.used[v]) s.values[v * 3 + 2] = 1;
  return { normals: s.values, indices: s.indices, sourceVertex: s.sourceVertex, fallbackTriangles: fallback };
}

function writeUnit(out: Float32Array, o: number, x: number, y: number, z: number): void {
  const l = Math.sqrt(x * x + y * y + z * z);
  if (!(l > ZERO_LENGTH) || !Number.isFinite(l)) {
    out[o] = 0; out[o + 1] = 0; out[o + 2] = 1;
    return;
  }
  out[o] = x / l; out[o + 1] = y / l; out[o + 2] = z / l;
}
