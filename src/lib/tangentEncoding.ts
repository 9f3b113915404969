/**
 * Based on: KHR_mesh_quantization (TANGENT may be stored as normalized BYTE or SHORT) and the
 * glTF 2.0 specification, 3.11 (a signed normalized integer c stands for max(c / (2^(n-1) - 1),
 * -1)), so round(x * 127) and round(x * 32767) are the nearest codes and w = +-1 is exact.
 */
import { BYTE, FLOAT, SHORT, type AttributeData } from '../mesh/asset.js';

/** The TANGENT component types `--tangent-type` offers. */
export type TangentType = 'float' | 'snorm16' | 'snorm8';

/**
 * Encodes tangents (4 floats per vertex: xyz, w = +-1) as a TANGENT attribute of `type`:
 * float as given; snorm16 / snorm8 as normalized SHORT / BYTE with round(x * 32767) /
 * round(x * 127), clamped to the symmetric range. Returns a new attribute (float: the array
 * itself).
 */
export function encodeTangents(tangents: Float32Array, type: TangentType): AttributeData {
  if (type === 'float') return { array: tangents, itemSize: 4, type: 'VEC4', componentType: FLOAT, normalized: false };
  const max = type === 'snorm16' ? 32767 : 127;
  const out = type === 'snorm16' ? new Int16Array(tangents.length) : new Int8Array(tangents.length);
  for (let i = 0; i < tangents.length; i++) {
    const c = Math.round(tangents[i] * max);
    out[i] = c > max ? max : c < -max ? -max : c;
  }
  return { array: out, itemSize: 4, type: 'VEC4', componentType: type === 'snorm16' ? SHORT : BYTE, normalized: true };
}

/**
 * The TANGENT type a baked primitive gets: `--tangent-type` when given; otherwise, with
 * 'keep', the type of a NORMAL stored as normalized BYTE or SHORT (KHR_mesh_quantization), else float.
 */
export function tangentTypeFor(normal: AttributeData | undefined, given: TangentType, fromInput: boolean, mode: 'keep' | 'none' | 'draco' | 'meshopt'): TangentType {
  if (!fromInput || mode !== 'keep' || !normal || !normal.normalized) return given;
  if (normal.componentType === BYTE) return 'snorm8';
  if (normal.componentType === SHORT) return 'snorm16';
  return given;
}
