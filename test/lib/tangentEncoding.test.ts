import { describe, expect, it } from 'vitest';
import { toFloat32 } from '../../src/mesh/decode.js';
import { encodeTangents } from '../../src/lib/tangentEncoding.js';

// Two tangents: one along an axis, one diagonal in the xy plane, handedness +1 and -1.
const T = new Float32Array([1, 0, 0, 1, Math.SQRT1_2, -Math.SQRT1_2, 0, -1]);

describe('TANGENT encoding for --tangent-type', () => {
  it('float keeps the values and the VEC4 float format', () => {
    const a = encodeTangents(T, 'float');
    expect(a.componentType).toBe(5126);
    expect(a.normalized).toBe(false);
    expect(a.array).toEqual(T);
  });

  it('snorm16: normalized SHORT with round(x * 32767), w exactly +-1 after decoding', () => {
    const a = encodeTangents(T, 'snorm16');
    // Source: KHR_mesh_quantization (TANGENT as normalized SHORT); glTF 2.0 3.11 (c / 32767).
    expect(a.componentType).toBe(5122);
    expect(a.normalized).toBe(true);
    expect(a.type).toBe('VEC4');
    expect(Array.from(a.array)).toEqual([32767, 0, 0, 32767, 23170, -23170, 0, -32767]);
    const back = toFloat32(a);
    expect(back[3]).toBe(1);
    expect(back[7]).toBe(-1);
  });

  it('snorm8: normalized BYTE with round(x * 127), never -128', () => {
    const a = encodeTangents(new Float32Array([-1, 0.5, -0.5, -1, -1.000001, 0, 0, 1]), 'snorm8');
    // Source: glTF 2.0 3.11: signed byte c stands for max(c / 127, -1); round(0.5 * 127) = 64 (round half up).
    expect(a.componentType).toBe(5120);
    expect(Array.from(a.array)).toEqual([-127, 64, -63, -127, -127, 0, 0, 127]);
  });
});
