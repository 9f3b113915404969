/**
 * Based on: glTF 2.0 specification, sections 3.5 (nodes and hierarchy: a node's global
 * transform is its parents' matrices times its own, TRS as T * R * S), 3.7 (meshes) and 3.9
 * (materials: baseColorFactor / baseColorTexture, normalTexture with scale, doubleSided),
 * 3.8.4 (samplers: wrap modes). The scene the CPU renderer draws: flat typed arrays only.
 */
import { mat4 } from 'gl-matrix';

/** glTF sampler wrap modes (glTF 2.0, 3.8.4). */
export const WRAP_REPEAT = 10497;
export const WRAP_CLAMP = 33071;
export const WRAP_MIRROR = 33648;

/** A decoded texture image: 8 or 16-bit samples widened to 16 bits, RGBA. */
export interface RenderImage {
  width: number;
  height: number;
  /** 4 samples per texel (0..65535), row-major, top row first. */
  data: Uint16Array;
}

/** How a material samples one image. */
export interface RenderTextureRef {
  /** Index into RenderScene.images. */
  image: number;
  /** TEXCOORD set (KHR_texture_transform's texCoord override applied). */
  texCoord: number;
  wrapS: number;
  wrapT: number;
  /** Column-major 3 x 3 KHR_texture_transform matrix, or null for none. */
  transform: ArrayLike<number> | null;
}

/** A material as the renderer uses it. */
export interface RenderMaterial {
  /** Linear RGB base colour factor. */
  baseColor: [number, number, number];
  baseColorTexture: RenderTextureRef | null;
  normalTexture: RenderTextureRef | null;
  /** normalTexture.scale (glTF 2.0, 3.9.3): scales the map's x and y. */
  normalScale: number;
  doubleSided: boolean;
}

/** One drawable triangle list with per-vertex attributes (object space). */
export interface RenderPrimitive {
  /** 3 floats per vertex. */
  positions: Float32Array;
  /** 3 floats per vertex (not necessarily unit). */
  normals: Float32Array;
  /** Texture coordinates by set: uvs[n] is TEXCOORD_n, 2 floats per vertex, or absent. */
  uvs: (Float32Array | null)[];
  /** The frames drawn (4 floats per vertex: xyz, w = +-1), or null (no normal mapping). */
  tangents: Float32Array | null;
  /** Frames compared with `tangents` in the mismatch mode, 4 floats per CORNER (3 per triangle), or null. */
  referenceTangents: Float32Array | null;
  /** Triangle list. */
  indices: Uint32Array;
  /** Per triangle, finding bits (FINDING_* of src/lib/bakeAsset.ts), or null for none. */
  findings: Uint8Array | null;
  /** Index into RenderScene.materials, or -1 for the default material. */
  material: number;
}

/** A primitive placed in the scene by a node's global transform. */
export interface RenderInstance {
  primitive: number;
  /** Column-major 4 x 4 object-to-world matrix. */
  matrix: Float64Array;
}

/** Everything one picture draws. */
export interface RenderScene {
  primitives: RenderPrimitive[];
  instances: RenderInstance[];
  materials: RenderMaterial[];
  images: RenderImage[];
}

/** The default material: 0.8 grey, single-sided, no textures (DESIGN.md render). */
export function defaultMaterial(): RenderMaterial {
  return { baseColor: [0.8, 0.8, 0.8], baseColorTexture: null, normalTexture: null, normalScale: 1, doubleSided: false };
}

/**
 * The bounding sphere of the scene's world-space vertices (node transforms applied): centre
 * of their axis-aligned box and the largest distance from it. Non-finite positions are left
 * out. Returns [cx, cy, cz, r]; an empty scene gives a unit sphere at the origin.
 */
export function sceneBounds(scene: RenderScene): [number, number, number, number] {
  let minX = Infinity, minY = Infinity, minZ = Infinity, maxX = -Infinity, maxY = -Infinity, maxZ = -Infinity;
  for (let pass = 0; pass < 2; pass++) {
    const cx = (minX + maxX) / 2, cy = (minY + maxY) / 2, cz = (minZ + maxZ) / 2;
    let r2 = 0;
    for (const inst of scene.instances) {
      const p = scene.primitives[inst.primitive].positions;
      const m = inst.matrix;
      const m0 = m[0], m1 = m[1], m2 = m[2], m4 = m[4], m5 = m[5], m6 = m[6], m8 = m[8], m9 = m[9], m10 = m[10], m12 = m[12], m13 = m[13], m14 = m[14];
      for (let i = 0; i < p.length; i += 3) {
        const px = p[i], py = p[i + 1], pz = p[i + 2];
        const x = m0 * px + m4 * py + m8 * pz + m12;
        const y = m1 * px + m5 * py + m9 * pz + m13;
        const z = m2 * px + m6 * py + m10 * pz + m14;
        if (x - x !== 0 || y - y !== 0 || z - z !== 0) continue;
        if (pass === 0) {
          if (x < minX) minX = x;
          if (x > maxX) maxX = x;
          if (y < minY) minY = y;
          if (y > maxY) maxY = y;
          if (z < minZ) minZ = z;
          if (z > maxZ) maxZ = z;
        } else {
          const d = (x - cx) * (x - cx) + (y - cy) * (y - cy) + (z - cz) * (z - cz);
          if (d > r2) r2 = d;
        }
      }
    }
    if (pass === 0 && !(minX <= maxX)) return [0, 0, 0, 1];
    if (pass === 1) {
      const r = Math.sqrt(r2);
      return [cx, cy, cz, r > 0 ? r : 1];
    }
  }
  return [0, 0, 0, 1];
}

/** A node's local matrix: `matrix` when given (16 finite numbers), else T * R * S from its TRS (glTF 2.0, 3.5.2). */
export function nodeMatrix(node: any): Float64Array {
  const out = new Float64Array(16);
  const m = node?.matrix;
  if (Array.isArray(m) && m.length === 16 && m.every((x) => typeof x === 'number' && Number.isFinite(x))) {
    out.set(m);
    return out;
  }
  const num = (a: unknown, n: number, d: number[]) =>
    Array.isArray(a) && a.length === n && a.every((x) => typeof x === 'number' && Number.isFinite(x)) ? (a as number[]) : d;
  const t = num(node?.translation, 3, [0, 0, 0]);
  const r = num(node?.rotation, 4, [0, 0, 0, 1]);
  const s = num(node?.scale, 3, [1, 1, 1]);
  const q = Math.hypot(r[0], r[1], r[2], r[3]);
  const rq = q > 0 ? [r[0] / q, r[1] / q, r[2] / q, r[3] / q] : [0, 0, 0, 1];
  mat4.fromRotationTranslationScale(out as unknown as mat4, rq, t, s);
  return out;
}
