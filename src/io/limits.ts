/**
 * Size limits checked before a file's geometry is decoded, so a hostile or runaway file is
 * refused with 'too-large' instead of exhausting memory.
 * Based on: glTF 2.0 specification, 3.7.2.1 (primitive modes: triangle counts of lists,
 * strips and fans) and 3.6.2 (accessor counts). The limits themselves are our choices
 * (resource limits, common practice), explained at each constant.
 */
import { MODE_TRIANGLES } from '../mesh/asset.js';
import { TanframeError } from '../mesh/errors.js';
import { triangleCount } from '../mesh/triangulate.js';

/**
 * Default `--max-triangles`: the most triangles one file may hold. Processing peaks at about
 * 260 bytes per triangle (measured on a 2-million-triangle GLB: ~0.52 GB resident), so 20
 * million triangles need about 5 GB, which still fits a common 8 GB build machine. Real-time
 * assets sit far below (a few million at most); scans and film meshes above it can raise
 * the limit explicitly.
 */
export const DEFAULT_MAX_TRIANGLES = 20_000_000;

/**
 * Triangles every file may declare whatever its size (a small file may still index a
 * zero-filled or sparse accessor). With TRIANGLES_PER_INPUT_BYTE this keeps memory bounded
 * by the file size: a 1 KB file cannot ask for more than about a million triangles.
 */
export const TRIANGLE_ALLOWANCE = 1_000_000;

/**
 * Triangles allowed per byte of input data on top of TRIANGLE_ALLOWANCE. Stored geometry
 * needs at least a byte per triangle (a strip of 8-bit indices); compressed geometry
 * (Draco, meshopt) reaches one to two triangles per byte on typical meshes, so 4 leaves
 * headroom while refusing files whose triangles can only come from expanding zeros.
 */
export const TRIANGLES_PER_INPUT_BYTE = 4;

/** Limits applied while reading a file. */
export interface ReadLimits {
  /** Most triangles one file may hold (default DEFAULT_MAX_TRIANGLES). */
  maxTriangles?: number;
}

/**
 * Refuses a file with 'too-large' when `triangles` exceeds `limits.maxTriangles` (default
 * DEFAULT_MAX_TRIANGLES) or more than TRIANGLE_ALLOWANCE + TRIANGLES_PER_INPUT_BYTE x
 * `inputBytes` (the triangles could only come from expanding data the file does not hold).
 */
export function checkTriangleLimit(triangles: number, inputBytes: number, limits: ReadLimits = {}): void {
  const max = limits.maxTriangles ?? DEFAULT_MAX_TRIANGLES;
  if (triangles > max) {
    throw new TanframeError('too-large', `the file holds ${triangles} triangles, more than the limit of ${max} (raise it with --max-triangles)`);
  }
  const supported = TRIANGLE_ALLOWANCE + TRIANGLES_PER_INPUT_BYTE * inputBytes;
  if (triangles > supported) {
    throw new TanframeError('too-large', `the file declares ${triangles} triangles but holds only ${inputBytes} bytes of data`);
  }
}

/**
 * Triangles the primitives of a checked glTF JSON declare, from accessor counts alone (no
 * data is read): indices count, else the first attribute's count, by mode; non-triangle
 * modes count 0. Precondition: meshes, primitives and their accessor references checked.
 */
export function declaredGltfTriangles(json: any): number {
  let total = 0;
  const meshes: any[] = Array.isArray(json.meshes) ? json.meshes : [];
  for (const mesh of meshes) {
    for (const prim of mesh.primitives as any[]) {
      const accessor = prim.indices ?? Object.values(prim.attributes as Record<string, number>)[0];
      const count = json.accessors?.[accessor as number]?.count;
      if (typeof count === 'number') total += triangleCount(prim.mode ?? MODE_TRIANGLES, count);
    }
  }
  return total;
}

