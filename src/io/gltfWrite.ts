/**
 * Encodes an Asset, with some primitives replaced by baked geometry, as .glb or .gltf.
 * Based on: glTF 2.0 specification, sections 3.6 (buffers, buffer views, accessors, data
 * alignment, accessor bounds), 3.7.2 (mesh primitives: POSITION min/max required, index
 * component types, morph targets), 3.8.3 (images) and 4.4 (GLB); KHR_mesh_quantization;
 * KHR_draco_mesh_compression and EXT_meshopt_compression (compressed output).
 *
 * The JSON members the encoder edits are deep-copied and edited in place, the others shared
 * with the input, so every key keeps the input's order and everything we do not touch
 * (nodes, materials, animations, extras, unknown extensions) is preserved verbatim. Accessors still referenced are kept, others dropped, and all
 * references renumbered. All binary data goes into one new buffer: kept buffer views are
 * copied, new accessors get their own tightly packed views; every view starts 4-byte
 * aligned. Replacement arrays shared between primitives (the same AttributeData or index
 * array object) are written once and their accessor shared. Without `compression`,
 * compressed geometry is written uncompressed: Draco primitives from their decoded data,
 * meshopt views from the bytes the reader decoded into them. With it (WriteCompression),
 * unbaked Draco primitives and meshopt views keep their compressed bytes, and replacements
 * are written as the Draco streams or meshopt views it names (the uncompressed homes of
 * meshopt views in a fallback buffer 1 without data). Every written POSITION accessor (kept
 * or new) has a correct min/max. The output is a pure function of the inputs.
 */
import { createHash } from 'node:crypto';
import * as path from 'node:path';
import {
  BYTE,
  FLOAT,
  MODE_TRIANGLES,
  SHORT,
  UNSIGNED_INT,
  UNSIGNED_SHORT,
  type Asset,
  type AttributeData,
  type ComponentArray,
  type PrimitiveReplacement,
} from '../mesh/asset.js';
import { toFloat32 } from '../mesh/decode.js';
import { TanframeError, assert } from '../mesh/errors.js';
import { outputFromParts, type OutputFile } from './files.js';
import { glbParts } from './glb.js';
import { TYPE_COMPONENTS, elementLayout, packedElementBytes } from './gltfAccessor.js';
import { accessorRefs, bufferViewRefs, keepReferenced } from './gltfRefs.js';
import { needsQuantization } from './gltfSemantics.js';
import type { MeshoptEncoders } from './meshopt.js';
import { uriToRelativePath } from './uri.js';

/** Options of encodeGltf. */
export interface EncodeOptions {
  format: 'glb' | 'gltf';
  /** Path of the .glb / .gltf to produce; a .gltf's .bin and images go beside it. */
  outPath: string;
  /** Copied images written under another URI (the write plan's names for colliding contents): URI -> new URI. */
  imageUris?: Record<string, string>;
  /** .gltf: store the buffer as a `data:` URI instead of a .bin file (the input's buffers were embedded). */
  embedBuffers?: boolean;
  /** How compressed geometry is written; absent: everything decoded and plain. */
  compression?: WriteCompression;
}

/** A baked primitive's geometry as a Draco stream made for it (see lib/compression.ts). */
export interface DracoPrimitive {
  /** The stream. */
  bytes: Uint8Array;
  /** The extension's `attributes` map: semantic -> Draco unique id. */
  ids: Record<string, number>;
  /** Vertices and index count the stream decodes to. */
  vertexCount: number;
  indexCount: number;
  /** Per semantic, the accessor describing the decoded data (no bufferView), POSITION with min/max. */
  accessors: Record<string, { componentType: number; normalized: boolean; type: string; min?: number[]; max?: number[] }>;
}

/** How a baked primitive's new buffer views are meshopt-compressed. */
export interface MeshoptPrimitive {
  /** EXT_meshopt_compression or KHR_meshopt_compression. */
  name: string;
  /** Semantics written through the OCTAHEDRAL filter (NORMAL, TANGENT), with the bytes per element (4: 8-bit, 8: 16-bit). */
  octahedral: Record<string, 4 | 8>;
}

/**
 * Compression of the output. Source: KHR_draco_mesh_compression (the primitive extension,
 * accessors without bufferView describing the decoded data) and EXT_meshopt_compression
 * (compressed views whose uncompressed home is a fallback buffer without data).
 */
export interface WriteCompression {
  /** Draco primitives without a replacement and meshopt-compressed views keep the input's compressed bytes. */
  keepCompressed: boolean;
  /** Replacements stored as Draco streams. */
  draco: Map<PrimitiveReplacement, DracoPrimitive>;
  /** Replacements (keys as the replacements map) whose new views are meshopt-compressed. */
  meshopt: Map<number, MeshoptPrimitive>;
  /** Needed when `meshopt` is not empty. */
  meshoptEncoders?: MeshoptEncoders;
}

/** Hex digits of the content hash in a .gltf's buffer file name (`<name>.<hash>.bin`). */
export const BUFFER_HASH_DIGITS = 16;

/**
 * The buffer file name of a .gltf output: `<name>.<first 16 hex digits of its SHA-256>.bin`.
 * Named by content, so a new JSON never points at a half-replaced buffer: a replacement writes
 * the new buffer under its own name, then the JSON (see writeAssetAtomic).
 */
export function bufferFileName(outPath: string, bin: Uint8Array): string {
  return bufferFileNameOfParts(outPath, [bin]);
}

/** bufferFileName of the buffer made of `parts` one after another (hashed part by part, not joined). */
function bufferFileNameOfParts(outPath: string, parts: Uint8Array[]): string {
  const stem = path.basename(outPath, path.extname(outPath));
  const hash = createHash('sha256');
  for (const p of parts) hash.update(p);
  return `${stem}.${hash.digest('hex').slice(0, BUFFER_HASH_DIGITS)}.bin`;
}

/** True when `name` is a buffer file name bufferFileName gives for an output named `outPath`. */
export function isBufferFileOf(outPath: string, name: string): boolean {
  const stem = path.basename(outPath, path.extname(outPath));
  return name.length === stem.length + BUFFER_HASH_DIGITS + 5 && name.startsWith(`${stem}.`) &&
    /^\.[0-9a-f]+\.bin$/.test(name.slice(stem.length));
}

/** bufferView.target values. Source: glTF 2.0 specification, bufferView.target. */
const ARRAY_BUFFER = 34962;
const ELEMENT_ARRAY_BUFFER = 34963;

/** Geometry-compression extensions. */
const MESHOPT = ['EXT_meshopt_compression', 'KHR_meshopt_compression'];
const DRACO = 'KHR_draco_mesh_compression';
const QUANTIZATION = 'KHR_mesh_quantization';

const ARRAY_TYPES: Record<number, Function> = {
  5120: Int8Array,
  5121: Uint8Array,
  5122: Int16Array,
  5123: Uint16Array,
  5125: Uint32Array,
  5126: Float32Array,
};

/** `n` rounded up to a multiple of 4 (arithmetic, so it stays right above 2 GiB). */
function align4(n: number): number {
  return n + ((4 - (n % 4)) % 4);
}

function isObject(v: unknown): v is Record<string, any> {
  return v !== null && typeof v === 'object' && !Array.isArray(v);
}

/** Accumulates the new buffer: parts placed at 4-byte aligned offsets. */
class BinBuilder {
  private parts: { offset: number; bytes: Uint8Array }[] = [];
  length = 0;

  /** Places `bytes` at the next 4-byte aligned offset and returns that offset. */
  add(bytes: Uint8Array): number {
    const offset = align4(this.length);
    this.parts.push({ offset, bytes });
    this.length = offset + bytes.byteLength;
    return offset;
  }

  /** The whole buffer, zero-padded to a multiple of 4. */
  finish(): Uint8Array {
    const out = new Uint8Array(align4(this.length));
    this.writeInto(out, 0);
    return out;
  }

  /** Writes the parts into `out` from offset `at` (the padding between them is left as it is: zero in a fresh array). */
  writeInto(out: Uint8Array, at: number): void {
    for (const p of this.parts) out.set(p.bytes, at + p.offset);
  }

  /** The whole buffer as pieces in order (the parts themselves, not copied, with zero padding between and after them). */
  pieces(): Uint8Array[] {
    const out: Uint8Array[] = [];
    let at = 0;
    for (const p of this.parts) {
      if (p.offset > at) out.push(ZERO_PADDING.subarray(0, p.offset - at));
      if (p.bytes.byteLength > 0) out.push(p.bytes);
      at = p.offset + p.bytes.byteLength;
    }
    const end = align4(this.length);
    if (end > at) out.push(ZERO_PADDING.subarray(0, end - at));
    return out;
  }
}

/** Zeros for the padding between pieces (never written to). */
const ZERO_PADDING = new Uint8Array(4);

/** Everything the encoding steps share. */
interface EncodeState {
  asset: Asset;
  json: any;
  bin: BinBuilder;
  /** New buffer views (kept ones first, then appended ones). */
  views: any[];
  /** New accessors (kept ones first, then appended ones). */
  accessors: any[];
  /** True when a new accessor uses a format only KHR_mesh_quantization allows. */
  needsQuantization: boolean;
  /** Accessors already written for a replacement attribute array (shared replacements write once). */
  writtenAttributes: Map<AttributeData, number>;
  /** Accessors already written for a replacement index array. */
  writtenIndices: Map<Uint32Array, number>;
  compression: WriteCompression | null;
  /** Bytes of the meshopt fallback buffer (buffer 1): the uncompressed homes of compressed views. */
  fallbackLength: number;
  /** Meshopt extensions the output's views use. */
  meshoptUsed: Set<string>;
  /** While a replacement's views are written meshopt-compressed: how. */
  meshoptNow: MeshoptPrimitive | null;
  /** Draco primitives already written (shared replacements share accessors and stream). */
  writtenDraco: Map<PrimitiveReplacement, { attributes: Record<string, number>; indices: number; view: number }>;
  /** True when a primitive of the output holds Draco data. */
  dracoUsed: boolean;
}

/** The buffer holding the uncompressed homes of meshopt-compressed views (no data: EXT_meshopt_compression fallback). */
const FALLBACK_BUFFER = 1;

/** The bytes of original buffer view `i` (the reader checked its range). */
function originalViewBytes(asset: Asset, i: number): Uint8Array {
  const v = asset.json.bufferViews[i];
  const buffer = asset.buffers[v.buffer];
  const offset = v.byteOffset ?? 0;
  if (!buffer || offset + v.byteLength > buffer.byteLength) {
    throw new TanframeError('internal', `bufferView ${i} has no data to copy`);
  }
  return buffer.subarray(offset, offset + v.byteLength);
}

/** Removes the named extensions from `obj.extensions`, dropping an emptied object. */
function stripExtensions(obj: any, names: string[]): void {
  if (!isObject(obj) || !isObject(obj.extensions)) return;
  for (const n of names) delete obj.extensions[n];
  if (Object.keys(obj.extensions).length === 0) delete obj.extensions;
}

/**
 * Decoded POSITION data (base and morph targets) of the primitives kept as they are, by
 * original accessor index.
 */
function keptPositions(asset: Asset, replaced: Set<string>): Map<number, AttributeData> {
  const out = new Map<number, AttributeData>();
  for (const p of asset.primitives) {
    if (replaced.has(`${p.mesh}/${p.primitive}`)) continue;
    const prim = asset.json.meshes?.[p.mesh]?.primitives?.[p.primitive];
    if (!isObject(prim)) continue;
    const maps: [unknown, Record<string, AttributeData> | undefined][] = [[prim.attributes, p.attributes]];
    const targets: unknown[] = Array.isArray(prim.targets) ? prim.targets : [];
    targets.forEach((t, i) => maps.push([t, p.targets[i]]));
    for (const [map, data] of maps) {
      if (isObject(map) && typeof map.POSITION === 'number' && data?.POSITION) out.set(map.POSITION, data.POSITION);
    }
  }
  return out;
}

/**
 * Makes a kept POSITION accessor's min/max match its decoded values (glTF 2.0, 3.6.2.5: over
 * the values after sparse substitution). Declared values that already match (compared after
 * rounding to float32, the storage precision) are left as written.
 */
function fixBounds(accessor: any, data: AttributeData): void {
  const b = bounds(data.array, data.itemSize);
  const float = data.componentType === FLOAT;
  const same = (declared: unknown, actual: number[]) =>
    Array.isArray(declared) && declared.length === actual.length &&
    declared.every((x, c) => typeof x === 'number' && (float ? Math.fround(x) : x) === actual[c]);
  if (!same(accessor.min, b.min) || !same(accessor.max, b.max)) {
    accessor.min = b.min;
    accessor.max = b.max;
  }
}

/** Keeps referenced accessors (outside replaced primitives), renumbering every reference. */
function keepAccessors(state: EncodeState, replaced: Set<string>): void {
  const json = state.json;
  const positions = keptPositions(state.asset, replaced);
  const all: any[] = Array.isArray(json.accessors) ? json.accessors : [];
  for (const [index, data] of positions) if (isObject(all[index])) fixBounds(all[index], data);
  const refs = accessorRefs(json, (m, p) => replaced.has(`${m}/${p}`));
  const kept = keepReferenced(refs, all.length, 'accessor');
  state.accessors = kept.map((i) => all[i]);
  json.accessors = state.accessors;
}

/** Places `byteLength` bytes in the fallback buffer and returns their offset (4-byte aligned). */
function addFallback(state: EncodeState, byteLength: number): number {
  const offset = align4(state.fallbackLength);
  state.fallbackLength = offset + byteLength;
  return offset;
}

/**
 * Keeps referenced buffer views, copying their bytes into the new buffer. With
 * `keepCompressed`, a meshopt-compressed view keeps its compressed stream (copied) and its
 * extension object, its uncompressed home moving to the fallback buffer; otherwise it is
 * written with the bytes the reader decoded into it.
 */
function keepBufferViews(state: EncodeState): void {
  const json = state.json;
  const all: any[] = Array.isArray(json.bufferViews) ? json.bufferViews : [];
  const kept = keepReferenced(bufferViewRefs(json), all.length, 'bufferView');
  const compressed = new Map((state.compression?.keepCompressed ? state.asset.meshoptViews ?? [] : []).map((v) => [v.view, v]));
  state.views = kept.map((old) => {
    const view = all[old];
    const c = compressed.get(old);
    if (c) {
      const ext = view.extensions[c.name];
      ext.buffer = 0;
      ext.byteOffset = state.bin.add(c.source);
      stripExtensions(view, MESHOPT.filter((n) => n !== c.name));
      view.buffer = FALLBACK_BUFFER;
      view.byteOffset = addFallback(state, view.byteLength);
      state.meshoptUsed.add(c.name);
      return view;
    }
    const offset = state.bin.add(originalViewBytes(state.asset, old));
    view.buffer = 0;
    if (view.byteOffset !== undefined || offset !== 0) view.byteOffset = offset;
    stripExtensions(view, MESHOPT);
    return view;
  });
  json.bufferViews = state.views;
}

/**
 * Appends a meshopt-compressed buffer view over `bytes` (`count` elements of `stride` bytes):
 * the stream in buffer 0, the uncompressed home in the fallback buffer. Vertex views declare
 * their byteStride (glTF 2.0: index views never do). Returns its index.
 */
function addCompressedView(state: EncodeState, name: string, bytes: Uint8Array, count: number, stride: number, mode: 'ATTRIBUTES' | 'TRIANGLES', filter: string | null): number {
  const encoders = state.compression?.meshoptEncoders;
  assert(encoders !== undefined, 'meshopt compression asked for without the encoders');
  const stream = encoders.encode(bytes, count, stride, mode);
  const ext: any = { buffer: 0, byteOffset: state.bin.add(stream), byteLength: stream.byteLength, byteStride: stride, count, mode };
  if (filter) ext.filter = filter;
  const view: any = { buffer: FALLBACK_BUFFER, byteOffset: addFallback(state, bytes.byteLength), byteLength: bytes.byteLength };
  if (mode === 'ATTRIBUTES') view.byteStride = stride;
  view.target = mode === 'ATTRIBUTES' ? ARRAY_BUFFER : ELEMENT_ARRAY_BUFFER;
  view.extensions = { [name]: ext };
  state.meshoptUsed.add(name);
  state.views.push(view);
  return state.views.length - 1;
}

/**
 * A vertex attribute through the OCTAHEDRAL filter: its float values (w 0 for a VEC3) encoded
 * by meshoptimizer's encodeFilterOct at the full precision of `stride` (8 or 16 bits), read
 * back as normalized BYTE or SHORT (EXT_meshopt_compression, filter OCTAHEDRAL; KHR_mesh_quantization).
 */
function octahedralBytes(state: EncodeState, a: AttributeData, count: number, stride: 4 | 8): Uint8Array {
  const f = toFloat32(a);
  const values = new Float32Array(count * 4);
  for (let i = 0; i < count; i++) {
    for (let c = 0; c < a.itemSize && c < 4; c++) values[i * 4 + c] = f[i * a.itemSize + c];
  }
  return state.compression!.meshoptEncoders!.octahedral(values, count, stride, stride === 4 ? 8 : 16);
}

/** Appends a buffer view over `bytes` and returns its index. */
function addView(state: EncodeState, bytes: Uint8Array, stride: number | undefined, target: number | undefined): number {
  const view: any = { buffer: 0, byteOffset: state.bin.add(bytes), byteLength: bytes.byteLength };
  if (stride !== undefined) view.byteStride = stride;
  if (target !== undefined) view.target = target;
  state.views.push(view);
  return state.views.length - 1;
}

/** Media type from an image's first bytes. Source: glTF 2.0 specification, 3.8.3 (PNG, JPEG patterns); others common practice. */
export function sniffImageType(b: Uint8Array): string | null {
  const starts = (sig: number[], at = 0) => b.length >= at + sig.length && sig.every((x, i) => b[at + i] === x);
  if (starts([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a])) return 'image/png';
  if (starts([0xff, 0xd8, 0xff])) return 'image/jpeg';
  if (starts([0x52, 0x49, 0x46, 0x46]) && starts([0x57, 0x45, 0x42, 0x50], 8)) return 'image/webp';
  if (starts([0xab, 0x4b, 0x54, 0x58, 0x20, 0x32, 0x30, 0xbb, 0x0d, 0x0a, 0x1a, 0x0a])) return 'image/ktx2';
  return null;
}

/**
 * External images: for GLB, embed each known image into the buffer (uri -> bufferView +
 * mimeType); for .gltf (and images of unknown type in a GLB) copy the file beside the output
 * at the same relative URI. Images whose bytes are unknown keep their URI only.
 */
function placeImages(state: EncodeState, format: 'glb' | 'gltf', outDir: string, renames: Record<string, string>): OutputFile[] {
  const files: OutputFile[] = [];
  const written = new Set<string>();
  for (const ext of state.asset.externalImages) {
    if (!ext.bytes) continue;
    const image = state.json.images?.[ext.image];
    const mime = format === 'glb' && isObject(image) && image.uri === ext.uri ? sniffImageType(ext.bytes) : null;
    if (mime) {
      delete image.uri;
      image.bufferView = addView(state, ext.bytes, undefined, undefined);
      if (image.mimeType === undefined) image.mimeType = mime;
      continue;
    }
    const uri = Object.hasOwn(renames, ext.uri) ? renames[ext.uri] : ext.uri;
    if (uri !== ext.uri && isObject(image) && image.uri === ext.uri) image.uri = uri;
    const target = path.join(outDir, ...uriToRelativePath(uri).split('/'));
    if (written.has(target)) continue;
    written.add(target);
    files.push({ path: target, bytes: ext.bytes });
  }
  return files;
}

/** Checks a caller-supplied attribute: array type matches componentType, length matches type. */
function checkAttributeData(a: AttributeData, what: string): number {
  const ctor = ARRAY_TYPES[a.componentType];
  assert(ctor !== undefined && a.array instanceof (ctor as any), `${what}: array does not match componentType ${a.componentType}`);
  assert(TYPE_COMPONENTS[a.type] === a.itemSize, `${what}: type ${a.type} does not have ${a.itemSize} components`);
  assert(a.array.length % a.itemSize === 0, `${what}: array length is not a multiple of itemSize`);
  return a.array.length / a.itemSize;
}

/**
 * Bytes of a dense array laid out as a vertex attribute: columns and elements 4-byte aligned.
 * The stride is returned (to be declared as byteStride) only when padding was inserted.
 */
function vertexLayoutBytes(a: AttributeData, count: number): { bytes: Uint8Array; stride: number | undefined } {
  const src = new Uint8Array(a.array.buffer, a.array.byteOffset, a.array.byteLength);
  const l = elementLayout(a.type, a.componentType);
  const dense = l.cols * l.colBytes;
  const packed = packedElementBytes(a.type, a.componentType);
  const stride = align4(packed);
  if (stride === dense) return { bytes: src, stride: undefined };
  const out = new Uint8Array(count * stride);
  const cols = l.cols;
  const colBytes = l.colBytes;
  const colStride = l.colStride;
  let s = 0;
  for (let i = 0; i < count; i++) {
    for (let c = 0; c < cols; c++) {
      const d = i * stride + c * colStride;
      for (let k = 0; k < colBytes; k++) out[d + k] = src[s + k];
      s += colBytes;
    }
  }
  // Declared whenever elements are padded: the Khronos validator measures a padded matrix
  // element without its trailing padding (6 bytes for a 1-byte MAT2) and then requires a stride.
  return { bytes: out, stride };
}

/** Per-component min and max of `array` (NaN skipped; 0 when a component has no number). */
function bounds(array: ComponentArray, itemSize: number): { min: number[]; max: number[] } {
  const min = new Array<number>(itemSize).fill(Infinity);
  const max = new Array<number>(itemSize).fill(-Infinity);
  if (itemSize === 3) {
    // POSITION: one pass over the elements with the six bounds in locals.
    let x0 = Infinity, y0 = Infinity, z0 = Infinity, x1 = -Infinity, y1 = -Infinity, z1 = -Infinity;
    for (let i = 0; i + 2 < array.length; i += 3) {
      const x = array[i], y = array[i + 1], z = array[i + 2];
      if (x < x0) x0 = x;
      if (x > x1) x1 = x;
      if (y < y0) y0 = y;
      if (y > y1) y1 = y;
      if (z < z0) z0 = z;
      if (z > z1) z1 = z;
    }
    min[0] = x0; min[1] = y0; min[2] = z0;
    max[0] = x1; max[1] = y1; max[2] = z1;
  } else {
    for (let i = 0; i < array.length; i++) {
      const v = array[i];
      const c = i % itemSize;
      if (v < min[c]) min[c] = v;
      if (v > max[c]) max[c] = v;
    }
  }
  for (let c = 0; c < itemSize; c++) {
    if (!Number.isFinite(min[c])) min[c] = 0;
    if (!Number.isFinite(max[c])) max[c] = 0;
  }
  return { min, max };
}

/** Appends an accessor (and its view) for one vertex attribute, or reuses the one written for `a`; returns its index. */
function addAttributeAccessor(state: EncodeState, semantic: string, a: AttributeData, isTarget: boolean, what: string): number {
  const done = state.writtenAttributes.get(a);
  if (done !== undefined) {
    const acc = state.accessors[done];
    if (semantic === 'POSITION' && acc.min === undefined) Object.assign(acc, bounds(a.array, a.itemSize));
    return done;
  }
  const count = checkAttributeData(a, what);
  if (count === 0) throw new TanframeError('bad-gltf', `${what} has no vertices to write`);
  const m = state.meshoptNow;
  const oct = m && !isTarget && (a.itemSize === 3 || a.itemSize === 4) ? m.octahedral[semantic] : undefined;
  let accessor: any;
  if (m && oct) {
    // Decoded by the filter into normalized BYTE (4-byte elements) or SHORT (8-byte elements).
    const componentType = oct === 4 ? BYTE : SHORT;
    accessor = { bufferView: addCompressedView(state, m.name, octahedralBytes(state, a, count, oct), count, oct, 'ATTRIBUTES', 'OCTAHEDRAL'), componentType, normalized: true };
  } else {
    const { bytes, stride } = vertexLayoutBytes(a, count);
    const view = m
      ? addCompressedView(state, m.name, bytes, count, stride ?? bytes.byteLength / count, 'ATTRIBUTES', null)
      : addView(state, bytes, stride, ARRAY_BUFFER);
    accessor = { bufferView: view, componentType: a.componentType };
    if (a.normalized) accessor.normalized = true;
  }
  accessor.count = count;
  accessor.type = a.type;
  if (semantic === 'POSITION') {
    // Source: glTF 2.0 specification, 3.7.2.1 and 3.7.2.2: POSITION accessors MUST have min and max.
    const b = bounds(a.array, a.itemSize);
    accessor.min = b.min;
    accessor.max = b.max;
  }
  if (needsQuantization(semantic, a.type, accessor.componentType, accessor.normalized === true, isTarget)) state.needsQuantization = true;
  state.accessors.push(accessor);
  state.writtenAttributes.set(a, state.accessors.length - 1);
  return state.accessors.length - 1;
}

/** Appends the index accessor (unsigned short when every index < 65535, else unsigned int), or reuses the one written for `indices`. */
function addIndexAccessor(state: EncodeState, indices: Uint32Array, vertexCount: number, what: string): number {
  const done = state.writtenIndices.get(indices);
  if (done !== undefined) return done;
  if (indices.length === 0) throw new TanframeError('bad-gltf', `${what} has no triangles to write`);
  let max = 0;
  for (let i = 0; i < indices.length; i++) if (indices[i] > max) max = indices[i];
  assert(max < vertexCount, `${what}: index ${max} out of range (${vertexCount} vertices)`);
  // Source: glTF 2.0 specification, 3.7.2.1: the maximum value of the type (65535) is reserved.
  const small = max < 65535;
  const data = small ? Uint16Array.from(indices) : indices;
  const bytes = new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
  const m = state.meshoptNow;
  state.accessors.push({
    bufferView: m
      ? addCompressedView(state, m.name, bytes, indices.length, small ? 2 : 4, 'TRIANGLES', null)
      : addView(state, bytes, undefined, ELEMENT_ARRAY_BUFFER),
    componentType: small ? UNSIGNED_SHORT : UNSIGNED_INT,
    count: indices.length,
    type: 'SCALAR',
  });
  state.writtenIndices.set(indices, state.accessors.length - 1);
  return state.accessors.length - 1;
}

/** Semantics of `next` ordered as in `original`, the remaining ones sorted. */
function orderedSemantics(original: unknown, next: Record<string, AttributeData>): string[] {
  const first = isObject(original) ? Object.keys(original).filter((k) => k in next) : [];
  const rest = Object.keys(next).filter((k) => !first.includes(k)).sort();
  return [...first, ...rest];
}

/** Writes new accessors for one attribute map and returns the map semantic -> accessor index. */
function writeAttributeMap(state: EncodeState, original: unknown, map: Record<string, AttributeData>, isTarget: boolean, what: string): Record<string, number> {
  const out: Record<string, number> = {};
  for (const sem of orderedSemantics(original, map)) out[sem] = addAttributeAccessor(state, sem, map[sem], isTarget, `${what} ${sem}`);
  return out;
}

/** Replaces one primitive's geometry: new attributes, indices and targets; mode triangles. */
function writeReplacement(state: EncodeState, m: number, p: number, r: PrimitiveReplacement, key: number): void {
  const prim = state.json.meshes[m].primitives[p];
  const what = `mesh ${m} primitive ${p}`;
  const oldTargets: any[] = Array.isArray(prim.targets) ? prim.targets : [];
  assert(r.targets.length === oldTargets.length, `${what}: replacement has ${r.targets.length} morph targets, the mesh ${oldTargets.length}`);
  const position = r.attributes.POSITION ?? Object.values(r.attributes)[0];
  assert(position !== undefined, `${what}: replacement has no attributes`);
  const vertexCount = position.array.length / position.itemSize;
  for (const [sem, a] of Object.entries(r.attributes)) {
    assert(checkAttributeData(a, `${what} ${sem}`) === vertexCount, `${what}: ${sem} count differs from the other attributes`);
  }
  const draco = state.compression?.draco.get(r);
  if (draco) {
    writeDracoGeometry(state, prim, r, draco);
  } else {
    state.meshoptNow = state.compression?.meshopt.get(key) ?? null;
    prim.attributes = writeAttributeMap(state, prim.attributes, r.attributes, false, what);
    prim.indices = addIndexAccessor(state, r.indices, vertexCount, what);
  }
  if (oldTargets.length > 0) {
    // Morph targets stay accessors (KHR_draco_mesh_compression compresses only the base attributes and indices).
    prim.targets = r.targets.map((t, i) => writeAttributeMap(state, oldTargets[i], t, true, `${what} target ${i}`));
  }
  state.meshoptNow = null;
  // Replacements are triangle lists; an absent mode already means triangles (glTF 2.0, mesh.primitive.mode default 4).
  if (prim.mode !== undefined) prim.mode = MODE_TRIANGLES;
}

/**
 * Writes a replacement's base geometry as its Draco stream: one view holding the stream,
 * accessors without bufferView describing the decoded data (count, type, POSITION min/max;
 * KHR_draco_mesh_compression: such accessors are the fallback description of the stream's
 * data), an indices accessor without bufferView, and the primitive extension. Primitives
 * sharing the replacement share it all.
 */
function writeDracoGeometry(state: EncodeState, prim: any, r: PrimitiveReplacement, d: DracoPrimitive): void {
  let done = state.writtenDraco.get(r);
  if (!done) {
    const attributes: Record<string, number> = {};
    for (const sem of orderedSemantics(prim.attributes, r.attributes)) {
      const a = d.accessors[sem];
      assert(a !== undefined, `Draco stream lacks ${sem}`);
      const accessor: any = { componentType: a.componentType };
      if (a.normalized) accessor.normalized = true;
      accessor.count = d.vertexCount;
      accessor.type = a.type;
      if (a.min && a.max) {
        accessor.min = a.min;
        accessor.max = a.max;
      }
      if (needsQuantization(sem, a.type, a.componentType, a.normalized, false)) state.needsQuantization = true;
      state.accessors.push(accessor);
      attributes[sem] = state.accessors.length - 1;
    }
    // Source: glTF 2.0 specification, 3.7.2.1: the maximum value of the type (65535) is reserved.
    state.accessors.push({ componentType: d.vertexCount <= 65535 ? UNSIGNED_SHORT : UNSIGNED_INT, count: d.indexCount, type: 'SCALAR' });
    done = { attributes, indices: state.accessors.length - 1, view: addView(state, d.bytes, undefined, undefined) };
    state.writtenDraco.set(r, done);
  }
  prim.attributes = { ...done.attributes };
  prim.indices = done.indices;
  const ids: Record<string, number> = {};
  for (const sem of Object.keys(prim.attributes)) ids[sem] = d.ids[sem];
  if (!isObject(prim.extensions)) prim.extensions = {};
  prim.extensions[DRACO] = { bufferView: done.view, attributes: ids };
  state.dracoUsed = true;
}

/** Removes `name` from extensionsUsed / extensionsRequired (dropping emptied lists). */
function undeclareExtension(json: any, name: string): void {
  for (const key of ['extensionsUsed', 'extensionsRequired']) {
    if (!Array.isArray(json[key])) continue;
    json[key] = json[key].filter((n: unknown) => n !== name);
    if (json[key].length === 0) delete json[key];
  }
}

/** Adds `name` to extensionsUsed and extensionsRequired when missing. */
function declareRequiredExtension(json: any, name: string): void {
  for (const key of ['extensionsUsed', 'extensionsRequired']) {
    if (!Array.isArray(json[key])) json[key] = [];
    if (!json[key].includes(name)) json[key].push(name);
  }
}

/** Extension bookkeeping after edits: compression gone where data is now plain; quantization declared when used. */
function tidyExtensions(state: EncodeState): void {
  const json = state.json;
  for (const n of MESHOPT) undeclareExtension(json, n);
  for (const b of Array.isArray(json.buffers) ? json.buffers : []) stripExtensions(b, MESHOPT);
  // Required: the fallback buffer has no data, so a reader without the extension cannot load the file.
  for (const n of MESHOPT) if (state.meshoptUsed.has(n)) declareRequiredExtension(json, n);
  const dracoLeft = (json.meshes ?? []).some((mesh: any) => (mesh?.primitives ?? []).some((p: any) => isObject(p?.extensions?.[DRACO])));
  if (!dracoLeft) undeclareExtension(json, DRACO);
  // Required: Draco primitives written here have no uncompressed data.
  if (state.dracoUsed) declareRequiredExtension(json, DRACO);
  if (state.needsQuantization) declareRequiredExtension(json, QUANTIZATION);
}

/** The single output buffer object, keeping the key order (and name/extras) of the input's first buffer. */
function bufferObject(json: any, byteLength: number, uri: string | null): any {
  const first = Array.isArray(json.buffers) && isObject(json.buffers[0]) ? json.buffers[0] : {};
  const out: any = {};
  for (const key of Object.keys(first)) {
    if (key === 'uri') {
      if (uri !== null) out.uri = uri;
    } else if (key === 'byteLength') {
      out.byteLength = byteLength;
    } else {
      out[key] = first[key];
    }
  }
  if (out.byteLength === undefined) out.byteLength = byteLength;
  if (uri !== null && out.uri === undefined) out.uri = uri;
  stripExtensions(out, MESHOPT);
  return out;
}

/** Sets json.buffers / bufferViews / accessors, deleting lists that ended up empty. */
function finishLists(state: EncodeState, binLength: number, binUri: string | null): void {
  const json = state.json;
  if (binLength > 0) json.buffers = [bufferObject(json, binLength, binUri)];
  else delete json.buffers;
  if (state.fallbackLength > 0) {
    const name = MESHOPT.find((n) => state.meshoptUsed.has(n))!;
    json.buffers.push({ byteLength: align4(state.fallbackLength), extensions: { [name]: { fallback: true } } });
  }
  if (state.views.length > 0) json.bufferViews = state.views;
  else delete json.bufferViews;
  if (state.accessors.length > 0) json.accessors = state.accessors;
  else delete json.accessors;
}

/** True when the JSON primitive of `p` carries Draco-compressed data. */
function isDracoPrimitive(asset: Asset, p: { mesh: number; primitive: number }): boolean {
  return isObject(asset.json.meshes?.[p.mesh]?.primitives?.[p.primitive]?.extensions?.[DRACO]);
}

/**
 * Primitives whose geometry exists only as decoded data are written from it when they have no
 * replacement: every OBJ primitive (the synthesized JSON has empty attribute maps) and, unless
 * `keepCompressed` keeps their streams, every Draco-compressed glTF primitive (its accessors
 * have no uncompressed data, or data the extension overrides). Their decoded data is a
 * triangle list.
 */
function withDecodedDefaults(asset: Asset, replacements: Map<number, PrimitiveReplacement>, keepCompressed: boolean): Map<number, PrimitiveReplacement> {
  const all = new Map(replacements);
  asset.primitives.forEach((p, i) => {
    if (all.has(i)) return;
    if (asset.container !== 'obj' && (keepCompressed || !isDracoPrimitive(asset, p))) return;
    assert(p.mode === MODE_TRIANGLES, `decoded primitive ${i} is not a triangle list`);
    const first = Object.values(p.attributes)[0];
    const count = first ? first.array.length / first.itemSize : 0;
    const indices = p.indices ?? Uint32Array.from({ length: count }, (_, k) => k);
    all.set(i, { attributes: p.attributes, indices, targets: p.targets });
  });
  return all;
}

/** Maps replacement keys (indices into asset.primitives) to "mesh/primitive", sorted by key. */
function replacementTargets(asset: Asset, replacements: Map<number, PrimitiveReplacement>): [number, number, PrimitiveReplacement, number][] {
  const keys = [...replacements.keys()].sort((a, b) => a - b);
  return keys.map((k) => {
    const prim = asset.primitives[k];
    assert(prim !== undefined, `replacement key ${k} is not a primitive index`);
    return [prim.mesh, prim.primitive, replacements.get(k)!, k];
  });
}

/**
 * Top-level members the encoder edits, directly or by renumbering the references they hold
 * (gltfRefs.ts); every other member (materials, scenes, extras, unknown ones) is only read.
 */
const EDITED_MEMBERS = new Set(['meshes', 'accessors', 'bufferViews', 'buffers', 'images', 'skins', 'animations', 'nodes', 'extensionsUsed', 'extensionsRequired']);

/**
 * A copy of the input JSON to edit: the members the encoder edits deep-copied, the others
 * shared with the input (never written to), so a file of large `extras` or materials is not
 * held twice. Key order kept.
 */
function editableCopy(json: any): any {
  const out: any = {};
  for (const key of Object.keys(json)) {
    const value = EDITED_MEMBERS.has(key) ? structuredClone(json[key]) : json[key];
    Object.defineProperty(out, key, { value, enumerable: true, writable: true, configurable: true });
  }
  return out;
}

/**
 * Encodes `asset` with the given primitives (keys: indices into asset.primitives) replaced.
 * Returns the files to write, in a fixed order: for 'glb' one file (external images with known
 * bytes embedded, except ones of unknown image type, copied beside it); for 'gltf' the .gltf,
 * `<basename>.<hash>.bin` when there is binary data (bufferFileName; none with `embedBuffers`,
 * which stores it as a data: URI), then each external image with known bytes at its relative
 * URI beside the output (or the URI `imageUris` gives it, which the JSON then names). asset.generator and everything not edited stay as read.
 * OBJ primitives, and without `compression.keepCompressed` Draco-compressed primitives without
 * a replacement, are written from their decoded data, meshopt-compressed views with the bytes
 * the reader decoded; `compression` says what is written compressed.
 * Preconditions: replacement attribute arrays match their componentType/type, equal counts,
 * indices in range, as many morph targets as the original. Deterministic.
 * Throws 'bad-gltf' for dangling references or empty replacements, 'too-large' past 4 GiB GLB.
 */
export function encodeGltf(asset: Asset, replacements: Map<number, PrimitiveReplacement>, options: EncodeOptions): OutputFile[] {
  return encodeGltfParts(asset, replacements, options).map((f) => ({ path: f.path, bytes: f.bytes }));
}

/**
 * encodeGltf with the GLB and the .gltf's buffer file as outputs made of parts (files.ts,
 * outputFromParts): their binary data stays in the arrays it was encoded from, so
 * writeFilesAtomic writes it straight into the file and the whole file is never built in
 * memory. The same files, byte for byte, as encodeGltf.
 */
export function encodeGltfParts(asset: Asset, replacements: Map<number, PrimitiveReplacement>, options: EncodeOptions): OutputFile[] {
  const json = editableCopy(asset.json);
  const compression = options.compression ?? null;
  const targets = replacementTargets(asset, withDecodedDefaults(asset, replacements, !!compression?.keepCompressed));
  const replaced = new Set(targets.map(([m, p]) => `${m}/${p}`));
  const state: EncodeState = {
    asset, json, bin: new BinBuilder(), views: [], accessors: [], needsQuantization: false,
    writtenAttributes: new Map(), writtenIndices: new Map(),
    compression, fallbackLength: 0, meshoptUsed: new Set(), meshoptNow: null, writtenDraco: new Map(), dracoUsed: false,
  };
  for (const [m, p] of targets) stripExtensions(json.meshes[m].primitives[p], [DRACO]);
  keepAccessors(state, replaced);
  keepBufferViews(state);
  const outDir = path.dirname(options.outPath);
  const imageFiles = placeImages(state, options.format, outDir, options.imageUris ?? {});
  for (const [m, p, r, key] of targets) writeReplacement(state, m, p, r, key);
  tidyExtensions(state);
  if (options.format === 'glb') {
    // The new buffer's parts go straight into the file's BIN chunk, never joined.
    finishLists(state, align4(state.bin.length), null);
    return [outputFromParts(options.outPath, glbParts(json, state.bin.pieces())), ...imageFiles];
  }
  if (options.embedBuffers) {
    const bin = state.bin.finish();
    finishLists(state, bin.byteLength, `data:application/octet-stream;base64,${Buffer.from(bin.buffer, bin.byteOffset, bin.byteLength).toString('base64')}`);
    return [{ path: options.outPath, bytes: new TextEncoder().encode(`${JSON.stringify(json, null, 2)}\n`) }, ...imageFiles];
  }
  const pieces = state.bin.pieces();
  const binLength = align4(state.bin.length);
  const binName = bufferFileNameOfParts(options.outPath, pieces);
  finishLists(state, binLength, encodeURIComponent(binName));
  const text = new TextEncoder().encode(`${JSON.stringify(json, null, 2)}\n`);
  const files: OutputFile[] = [{ path: options.outPath, bytes: text }];
  if (binLength > 0) files.push(outputFromParts(path.join(outDir, binName), pieces));
  return [...files, ...imageFiles];
}
