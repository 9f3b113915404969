/**
 * Builds tiny glTF 2.0 assets from typed arrays, for tests. Independent of src/io: it lays
 * out buffers, views and accessors itself and writes GLB / .gltf with its own code.
 * Layouts: separate views per attribute (default) or one interleaved view per primitive;
 * sparse accessors; normalized integers; accessors without bufferView; non-indexed
 * primitives; morph targets; extra raw accessors (skins, animations).
 * Source for the layout rules: glTF 2.0 specification, 3.6 (buffers, views, accessors,
 * alignment) and 4.4 (GLB header and chunks).
 */
import { mkdir, writeFile } from 'node:fs/promises';
import * as path from 'node:path';

export type TypedArray = Int8Array | Uint8Array | Int16Array | Uint16Array | Uint32Array | Float32Array;

/** One attribute to store. */
export interface BuildAttribute {
  array: TypedArray;
  type: 'SCALAR' | 'VEC2' | 'VEC3' | 'VEC4' | 'MAT2' | 'MAT3' | 'MAT4';
  normalized?: boolean;
  /** Store no base data (the accessor has no bufferView: zeros), only the sparse part if any. */
  noBufferView?: boolean;
  /** Sparse substitution: element indices (increasing) and their values. */
  sparse?: { indices: number[]; values: TypedArray; indexComponentType?: 5121 | 5123 | 5125 };
}

/** One primitive to store. */
export interface BuildPrimitive {
  attributes: Record<string, BuildAttribute>;
  indices?: Uint8Array | Uint16Array | Uint32Array;
  mode?: number;
  targets?: Record<string, BuildAttribute>[];
  material?: number;
}

/** Layout choices. */
export interface BuildOptions {
  /** Put all plain vertex attributes of a primitive in one strided view. */
  interleaved?: boolean;
  /** Insert this many bytes before each plain (non-interleaved) attribute's data inside its view. */
  attributeByteOffset?: number;
  extensionsUsed?: string[];
  extensionsRequired?: string[];
}

export function componentTypeOf(a: TypedArray): number {
  if (a instanceof Int8Array) return 5120;
  if (a instanceof Uint8Array) return 5121;
  if (a instanceof Int16Array) return 5122;
  if (a instanceof Uint16Array) return 5123;
  if (a instanceof Uint32Array) return 5125;
  return 5126;
}

const COMPONENTS: Record<string, number> = { SCALAR: 1, VEC2: 2, VEC3: 3, VEC4: 4, MAT2: 4, MAT3: 9, MAT4: 16 };

const align4 = (n: number) => (n + 3) & ~3;

function bytesOf(a: TypedArray): Uint8Array {
  return new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
}

/** Assembles glTF JSON and one binary buffer, piece by piece. */
export class GltfBuilder {
  readonly json: any = { asset: { version: '2.0', generator: 'tanframe test builder' } };
  private parts: { offset: number; bytes: Uint8Array }[] = [];
  private length = 0;

  /** Appends raw bytes as a new buffer view (4-byte aligned); returns its index. */
  addView(bytes: Uint8Array, extra: { byteStride?: number; target?: number } = {}): number {
    const offset = align4(this.length);
    this.parts.push({ offset, bytes });
    this.length = offset + bytes.byteLength;
    const views = (this.json.bufferViews ??= []);
    views.push({ buffer: 0, byteOffset: offset, byteLength: bytes.byteLength, ...extra });
    return views.length - 1;
  }

  /** Appends an accessor object; returns its index. */
  addAccessorObject(acc: any): number {
    const list = (this.json.accessors ??= []);
    list.push(acc);
    return list.length - 1;
  }

  /** Appends a tightly packed accessor over a new view holding `array`; returns its index. */
  addAccessor(array: TypedArray, type: string, extra: { normalized?: boolean; minMax?: boolean; target?: number } = {}): number {
    const view = this.addView(bytesOf(array), extra.target ? { target: extra.target } : {});
    const acc: any = { bufferView: view, componentType: componentTypeOf(array), count: array.length / COMPONENTS[type], type };
    if (extra.normalized) acc.normalized = true;
    if (extra.minMax) Object.assign(acc, minMax(array, COMPONENTS[type]));
    return this.addAccessorObject(acc);
  }

  /** Stores one attribute (plain, no-bufferView and/or sparse); returns the accessor index. */
  addAttribute(semantic: string, a: BuildAttribute, byteOffset = 0): number {
    const n = COMPONENTS[a.type];
    const count = a.array.length / n;
    const acc: any = { componentType: componentTypeOf(a.array), count, type: a.type };
    if (!a.noBufferView) {
      const bytes = new Uint8Array(byteOffset + a.array.byteLength);
      bytes.set(bytesOf(a.array), byteOffset);
      acc.bufferView = this.addView(bytes, { target: 34962 });
      if (byteOffset) acc.byteOffset = byteOffset;
    }
    if (a.normalized) acc.normalized = true;
    if (a.sparse) {
      const ct = a.sparse.indexComponentType ?? 5121;
      const ind = ct === 5121 ? Uint8Array.from(a.sparse.indices) : ct === 5123 ? Uint16Array.from(a.sparse.indices) : Uint32Array.from(a.sparse.indices);
      acc.sparse = {
        count: a.sparse.indices.length,
        indices: { bufferView: this.addView(bytesOf(ind)), componentType: ct },
        values: { bufferView: this.addView(bytesOf(a.sparse.values)) },
      };
    }
    if (semantic === 'POSITION') Object.assign(acc, minMax(denseWithSparse(a), n));
    return this.addAccessorObject(acc);
  }

  /** Stores all plain attributes of a primitive in one interleaved view; returns semantic -> accessor. */
  addInterleaved(attrs: Record<string, BuildAttribute>): Record<string, number> {
    const entries = Object.entries(attrs);
    const sizes = entries.map(([, a]) => (a.array.byteLength / (a.array.length / COMPONENTS[a.type])));
    const offsets: number[] = [];
    let stride = 0;
    for (const s of sizes) {
      offsets.push(stride);
      stride += align4(s);
    }
    const count = entries[0][1].array.length / COMPONENTS[entries[0][1].type];
    const bytes = new Uint8Array(stride * count);
    entries.forEach(([, a], k) => {
      const src = bytesOf(a.array);
      for (let i = 0; i < count; i++) bytes.set(src.subarray(i * sizes[k], (i + 1) * sizes[k]), i * stride + offsets[k]);
    });
    const view = this.addView(bytes, { byteStride: stride, target: 34962 });
    const out: Record<string, number> = {};
    entries.forEach(([sem, a], k) => {
      const acc: any = { bufferView: view, byteOffset: offsets[k], componentType: componentTypeOf(a.array), count, type: a.type };
      if (a.normalized) acc.normalized = true;
      if (sem === 'POSITION') Object.assign(acc, minMax(a.array, COMPONENTS[a.type]));
      out[sem] = this.addAccessorObject(acc);
    });
    return out;
  }

  /** Adds a primitive to mesh `mesh` (created on demand, with a node). */
  addPrimitive(p: BuildPrimitive, options: BuildOptions = {}, mesh = 0): void {
    const meshes = (this.json.meshes ??= []);
    while (meshes.length <= mesh) {
      meshes.push({ primitives: [] });
      const nodes = (this.json.nodes ??= []);
      nodes.push({ mesh: meshes.length - 1 });
      this.json.scenes = [{ nodes: nodes.map((_: unknown, i: number) => i) }];
      this.json.scene = 0;
    }
    const plain: Record<string, BuildAttribute> = {};
    const attributes: Record<string, number> = {};
    for (const [sem, a] of Object.entries(p.attributes)) {
      if (options.interleaved && !a.sparse && !a.noBufferView) plain[sem] = a;
    }
    const inter = options.interleaved && Object.keys(plain).length > 0 ? this.addInterleaved(plain) : {};
    for (const [sem, a] of Object.entries(p.attributes)) {
      attributes[sem] = inter[sem] ?? this.addAttribute(sem, a, options.attributeByteOffset ?? 0);
    }
    const prim: any = { attributes };
    if (p.indices) prim.indices = this.addAccessor(p.indices, 'SCALAR', { target: 34963 });
    if (p.mode !== undefined) prim.mode = p.mode;
    if (p.material !== undefined) {
      prim.material = p.material;
      const mats = (this.json.materials ??= []);
      while (mats.length <= p.material) mats.push({ name: `material ${mats.length}` });
    }
    if (p.targets) prim.targets = p.targets.map((t) => Object.fromEntries(Object.entries(t).map(([s, a]) => [s, this.addAttribute(s, a)])));
    meshes[mesh].primitives.push(prim);
  }

  /** The JSON (with its single buffer declared) and the buffer bytes. */
  build(options: BuildOptions = {}): { json: any; bin: Uint8Array } {
    if (options.extensionsUsed) this.json.extensionsUsed = options.extensionsUsed;
    if (options.extensionsRequired) this.json.extensionsRequired = options.extensionsRequired;
    const bin = new Uint8Array(align4(this.length));
    for (const p of this.parts) bin.set(p.bytes, p.offset);
    if (bin.byteLength > 0) this.json.buffers = [{ byteLength: bin.byteLength }];
    return { json: this.json, bin };
  }
}

/** Dense values of an attribute after sparse substitution (for min/max). */
function denseWithSparse(a: BuildAttribute): TypedArray {
  const n = COMPONENTS[a.type];
  const out = a.noBufferView ? new (a.array.constructor as any)(a.array.length) : a.array.slice();
  if (a.sparse) a.sparse.indices.forEach((idx, j) => out.set(a.sparse!.values.subarray(j * n, (j + 1) * n), idx * n));
  return out;
}

/** Per-component min and max. */
export function minMax(array: TypedArray, n: number): { min: number[]; max: number[] } {
  const min = new Array(n).fill(Infinity);
  const max = new Array(n).fill(-Infinity);
  for (let i = 0; i < array.length; i++) {
    min[i % n] = Math.min(min[i % n], array[i]);
    max[i % n] = Math.max(max[i % n], array[i]);
  }
  return { min, max };
}

/** Builds a one-mesh asset from primitives. */
export function buildGltf(primitives: BuildPrimitive[], options: BuildOptions = {}): { json: any; bin: Uint8Array } {
  const b = new GltfBuilder();
  for (const p of primitives) b.addPrimitive(p, options);
  return b.build(options);
}

/** GLB bytes: 12-byte header, JSON chunk (space padded), BIN chunk (zero padded) when non-empty. */
export function glbBytes(json: any, bin: Uint8Array): Uint8Array {
  const text = new TextEncoder().encode(JSON.stringify(json));
  const jsonLen = align4(text.length);
  const binLen = align4(bin.length);
  const total = 12 + 8 + jsonLen + (bin.length ? 8 + binLen : 0);
  const out = new Uint8Array(total);
  const dv = new DataView(out.buffer);
  dv.setUint32(0, 0x46546c67, true);
  dv.setUint32(4, 2, true);
  dv.setUint32(8, total, true);
  dv.setUint32(12, jsonLen, true);
  dv.setUint32(16, 0x4e4f534a, true);
  out.fill(0x20, 20, 20 + jsonLen);
  out.set(text, 20);
  if (bin.length) {
    const at = 20 + jsonLen;
    dv.setUint32(at, binLen, true);
    dv.setUint32(at + 4, 0x004e4942, true);
    out.set(bin, at + 8);
  }
  return out;
}

/** Writes `<dir>/<name>.glb`; returns its path. */
export async function writeGlb(dir: string, name: string, json: any, bin: Uint8Array): Promise<string> {
  await mkdir(dir, { recursive: true });
  const file = path.join(dir, `${name}.glb`);
  await writeFile(file, glbBytes(json, bin));
  return file;
}

/**
 * Writes `<dir>/<name>.gltf` with the buffer as `<name>.bin` beside it (or embedded as a
 * base64 data: URI with `embed: true`); returns the .gltf path.
 */
export async function writeGltf(dir: string, name: string, json: any, bin: Uint8Array, embed = false): Promise<string> {
  await mkdir(dir, { recursive: true });
  const copy = structuredClone(json);
  if (bin.length) {
    if (embed) {
      copy.buffers[0].uri = `data:application/octet-stream;base64,${Buffer.from(bin).toString('base64')}`;
    } else {
      copy.buffers[0].uri = `${name}.bin`;
      await writeFile(path.join(dir, `${name}.bin`), bin);
    }
  }
  const file = path.join(dir, `${name}.gltf`);
  await writeFile(file, JSON.stringify(copy, null, 2));
  return file;
}

/**
 * A unit quad in the z = 0 plane facing +Z, two triangles, material 0, uvs covering the
 * texture (glTF convention: v down); `uv` replaces the four corners' texture coordinates.
 *   3 ---- 2
 *   |    / |
 *   0 ---- 1
 */
export function unitQuad(uv: number[] = [0, 1, 1, 1, 1, 0, 0, 0]): BuildPrimitive {
  return {
    attributes: {
      POSITION: { array: new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]), type: 'VEC3' },
      NORMAL: { array: new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]), type: 'VEC3' },
      TEXCOORD_0: { array: new Float32Array(uv), type: 'VEC2' },
    },
    indices: new Uint16Array([0, 1, 2, 0, 2, 3]),
    material: 0,
  };
}
