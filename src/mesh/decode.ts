/**
 * Based on: glTF 2.0 specification, section 3.11 (animation / normalized integers): the
 * decoding of normalized integer components to floats, and KHR_mesh_quantization.
 */
import type { AttributeData, ComponentArray } from './asset.js';
import { BYTE, FLOAT, SHORT, UNSIGNED_BYTE, UNSIGNED_INT, UNSIGNED_SHORT } from './asset.js';
import { assert } from './errors.js';

/**
 * Decodes an attribute to float32 values (normalized integers to [0,1] / [-1,1] as glTF
 * specifies: signed c / (2^(n-1) - 1) clamped at -1; unsigned c / (2^n - 1)). A float
 * attribute is returned as it is (no copy). Returns itemSize floats per element.
 */
export function toFloat32(attr: AttributeData): Float32Array {
  const a = attr.array;
  if (a instanceof Float32Array) return a;
  const out = new Float32Array(a.length);
  if (!attr.normalized) {
    for (let i = 0; i < a.length; i++) out[i] = a[i];
    return out;
  }
  let div = 1, signed = false;
  switch (attr.componentType) {
    case BYTE: div = 127; signed = true; break;
    case UNSIGNED_BYTE: div = 255; break;
    case SHORT: div = 32767; signed = true; break;
    case UNSIGNED_SHORT: div = 65535; break;
    case UNSIGNED_INT: div = 4294967295; break;
    default: break;
  }
  for (let i = 0; i < a.length; i++) {
    const f = a[i] / div;
    out[i] = signed && f < -1 ? -1 : f;
  }
  return out;
}

/** Allocates an empty typed array of the component type, length `n`. */
export function allocComponents(componentType: number, n: number): ComponentArray {
  switch (componentType) {
    case BYTE: return new Int8Array(n);
    case UNSIGNED_BYTE: return new Uint8Array(n);
    case SHORT: return new Int16Array(n);
    case UNSIGNED_SHORT: return new Uint16Array(n);
    case UNSIGNED_INT: return new Uint32Array(n);
    case FLOAT: return new Float32Array(n);
    default: assert(false, `unknown component type ${componentType}`);
  }
}

/**
 * Copies an attribute element by element through `sourceVertex` (output element i copies
 * input element sourceVertex[i]), keeping its component type and flags bit for bit.
 * Precondition: every sourceVertex entry is below the attribute's element count.
 */
export function gatherAttribute(attr: AttributeData, sourceVertex: Uint32Array): AttributeData {
  const k = attr.itemSize;
  const n = sourceVertex.length;
  const src = attr.array;
  const out = allocComponents(attr.componentType, n * k);
  if (src instanceof Float32Array && out instanceof Float32Array && k >= 2 && k <= 4) gatherFloatElements(out, src, k, sourceVertex);
  else {
    for (let i = 0; i < n; i++) {
      const s = sourceVertex[i] * k, o = i * k;
      for (let j = 0; j < k; j++) out[o + j] = src[s + j];
    }
  }
  return { array: out, itemSize: k, type: attr.type, componentType: attr.componentType, normalized: attr.normalized };
}

/**
 * gatherAttribute's loop for float elements of 2, 3 or 4 components (positions, normals, UVs,
 * tangents), one monomorphic loop per size with the components copied without an inner loop.
 */
function gatherFloatElements(out: Float32Array, src: Float32Array, k: number, sourceVertex: Uint32Array): void {
  const n = sourceVertex.length;
  if (k === 3) {
    for (let i = 0, o = 0; i < n; i++, o += 3) {
      const s = sourceVertex[i] * 3;
      out[o] = src[s];
      out[o + 1] = src[s + 1];
      out[o + 2] = src[s + 2];
    }
  } else if (k === 2) {
    for (let i = 0, o = 0; i < n; i++, o += 2) {
      const s = sourceVertex[i] * 2;
      out[o] = src[s];
      out[o + 1] = src[s + 1];
    }
  } else {
    for (let i = 0, o = 0; i < n; i++, o += 4) {
      const s = sourceVertex[i] * 4;
      out[o] = src[s];
      out[o + 1] = src[s + 1];
      out[o + 2] = src[s + 2];
      out[o + 3] = src[s + 3];
    }
  }
}

/** Composes two source maps: result[i] = first[second[i]]. */
export function composeSource(first: Uint32Array, second: Uint32Array): Uint32Array {
  const out = new Uint32Array(second.length);
  for (let i = 0; i < second.length; i++) out[i] = first[second[i]];
  return out;
}
