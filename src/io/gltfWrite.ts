/**
 * Encodes an Asset, with some primitives replaced by baked geometry, as .glb or .gltf.
 * Based on: glTF 2.0 specification, sections 3.6 (buffers, buffer views, accessors, data
 * alignment, accessor bounds), 3.7.2 (mesh primitives: POSITION min/max required, index
 * component types, morph targets), 3.8.3 (images) and 4.4 (GLB); KHR_mesh_quantization.
 *
 * The JSON members the encoder edits are deep-copied and edited in place, the others shared
 * with the input, so every key keeps the input's order and everything we do not touch
 * (nodes, materials, animations, extras, unknown extensions) is preserved verbatim. Accessors still referenced are kept, others dropped, and all
 * references renumbered. All binary data goes into one new buffer: kept buffer views are
 * copied, new accessors get their own tightly packed views; every view starts 4-byte
 * aligned. Replacement arrays shared between primitives (the same AttributeData or index
 * array object) are written once and their accessor shared. Compressed geometry is written
 * uncompressed: Draco primitives from their decoded data, meshopt views from the bytes the
 * reader decoded into them. Every written POSITION accessor (kept or new) has a correct
 * min/max. The output is a pure function of the inputs.
 */
import { createHash } from 'node:crypto';
import * as path from 'node:path';
import {
  FLOAT,
  MODE_TRIANGLES,
  UNSIGNED_INT,
  UNSIGNED_SHORT,
  type Asset,
  type AttributeData,
  type ComponentArray,
  type PrimitiveReplacement,
} from '../mesh/asset.js';
import { TanframeError, assert } from '../mesh/errors.js';
import type { OutputFile } from './files.js';
import { assembleGlbWith } from './glb.js';
import { TYPE_COMPONENTS, elementLayout, packedElementBytes } from './gltfAccessor.js';
import { accessorRefs, bufferViewRefs, keepReferenced } from './gltfRefs.js';
import { needsQuantization } from './gltfSemantics.js';
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
}

/** Hex digits of the content hash in a .gltf's buffer file name (`<name>.<hash>.bin`). */
export const BUFFER_HASH_DIGITS = 16;

/**
 * The buffer file name of a .gltf output: `<name>.<first 16 hex digits of its SHA-256>.bin`.
 * Named by content, so a new JSON never points at a half-replaced buffer: a replacement writes
 * the new buffer under its own name, then the JSON (see writeAssetAtomic).
 */
export function bufferFileName(outPath: string, bin: Uint8Array): string {
  const stem = path.basename(outPath, path.extname(outPath));
  return `${stem}.${createHash('sha256').update(bin).digest('hex').slice(0, BUFFER_HASH_DIGITS)}.bin`;
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

/** Geometry-compression extensions whose data we never write (output is uncompressed). */
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
}

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
}

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

/** Keeps referenced buffer views, copying their bytes into the new buffer. */
function keepBufferViews(state: EncodeState): void {
  const json = state.json;
  const all: any[] = Array.isArray(json.bufferViews) ? json.bufferViews : [];
  const kept = keepReferenced(bufferViewRefs(json), all.length, 'bufferView');
  state.views = kept.map((old) => {
    const view = all[old];
    const offset = state.bin.add(originalViewBytes(state.asset, old));
    view.buffer = 0;
    if (view.byteOffset !== undefined || offset !== 0) view.byteOffset = offset;
    stripExtensions(view, MESHOPT);
    return view;
  });
  json.bufferViews = state.views;
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
  for (let i = 0; i < array.length; i++) {
    const v = array[i];
    const c = i % itemSize;
    if (v < min[c]) min[c] = v;
    if (v > max[c]) max[c] = v;
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
  const { bytes, stride } = vertexLayoutBytes(a, count);
  const accessor: any = { bufferView: addView(state, bytes, stride, ARRAY_BUFFER), componentType: a.componentType };
  if (a.normalized) accessor.normalized = true;
  accessor.count = count;
  accessor.type = a.type;
  if (semantic === 'POSITION') {
    // Source: glTF 2.0 specification, 3.7.2.1 and 3.7.2.2: POSITION accessors MUST have min and max.
    const b = bounds(a.array, a.itemSize);
    accessor.min = b.min;
    accessor.max = b.max;
  }
  if (needsQuantization(semantic, a.type, a.componentType, a.normalized, isTarget)) state.needsQuantization = true;
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
  state.accessors.push({
    bufferView: addView(state, bytes, undefined, ELEMENT_ARRAY_BUFFER),
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
function writeReplacement(state: EncodeState, m: number, p: number, r: PrimitiveReplacement): void {
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
  prim.attributes = writeAttributeMap(state, prim.attributes, r.attributes, false, what);
  prim.indices = addIndexAccessor(state, r.indices, vertexCount, what);
  if (oldTargets.length > 0) {
    prim.targets = r.targets.map((t, i) => writeAttributeMap(state, oldTargets[i], t, true, `${what} target ${i}`));
  }
  // Replacements are triangle lists; an absent mode already means triangles (glTF 2.0, mesh.primitive.mode default 4).
  if (prim.mode !== undefined) prim.mode = MODE_TRIANGLES;
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
  const dracoLeft = (json.meshes ?? []).some((mesh: any) => (mesh?.primitives ?? []).some((p: any) => isObject(p?.extensions?.[DRACO])));
  if (!dracoLeft) undeclareExtension(json, DRACO);
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
 * replacement: every OBJ primitive (the synthesized JSON has empty attribute maps) and every
 * Draco-compressed glTF primitive (its accessors have no uncompressed data, or data the
 * extension overrides). Their decoded data is a triangle list.
 */
function withDecodedDefaults(asset: Asset, replacements: Map<number, PrimitiveReplacement>): Map<number, PrimitiveReplacement> {
  const all = new Map(replacements);
  asset.primitives.forEach((p, i) => {
    if (all.has(i)) return;
    if (asset.container !== 'obj' && !isDracoPrimitive(asset, p)) return;
    assert(p.mode === MODE_TRIANGLES, `decoded primitive ${i} is not a triangle list`);
    const first = Object.values(p.attributes)[0];
    const count = first ? first.array.length / first.itemSize : 0;
    const indices = p.indices ?? Uint32Array.from({ length: count }, (_, k) => k);
    all.set(i, { attributes: p.attributes, indices, targets: p.targets });
  });
  return all;
}

/** Maps replacement keys (indices into asset.primitives) to "mesh/primitive", sorted by key. */
function replacementTargets(asset: Asset, replacements: Map<number, PrimitiveReplacement>): [number, number, PrimitiveReplacement][] {
  const keys = [...replacements.keys()].sort((a, b) => a - b);
  return keys.map((k) => {
    const prim = asset.primitives[k];
    assert(prim !== undefined, `replacement key ${k} is not a primitive index`);
    return [prim.mesh, prim.primitive, replacements.get(k)!];
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
 * OBJ primitives and Draco-compressed primitives without a replacement are written from
 * their decoded data; meshopt-compressed views are written with the bytes the reader decoded.
 * Preconditions: replacement attribute arrays match their componentType/type, equal counts,
 * indices in range, as many morph targets as the original. Deterministic.
 * Throws 'bad-gltf' for dangling references or empty replacements, 'too-large' past 4 GiB GLB.
 */
export function encodeGltf(asset: Asset, replacements: Map<number, PrimitiveReplacement>, options: EncodeOptions): OutputFile[] {
  const json = editableCopy(asset.json);
  const targets = replacementTargets(asset, withDecodedDefaults(asset, replacements));
  const replaced = new Set(targets.map(([m, p]) => `${m}/${p}`));
  const state: EncodeState = {
    asset, json, bin: new BinBuilder(), views: [], accessors: [], needsQuantization: false,
    writtenAttributes: new Map(), writtenIndices: new Map(),
  };
  for (const [m, p] of targets) stripExtensions(json.meshes[m].primitives[p], [DRACO]);
  keepAccessors(state, replaced);
  keepBufferViews(state);
  const outDir = path.dirname(options.outPath);
  const imageFiles = placeImages(state, options.format, outDir, options.imageUris ?? {});
  for (const [m, p, r] of targets) writeReplacement(state, m, p, r);
  tidyExtensions(state);
  if (options.format === 'glb') {
    // The new buffer goes straight into the GLB's BIN chunk, never joined on its own first.
    const binLength = align4(state.bin.length);
    finishLists(state, binLength, null);
    return [{ path: options.outPath, bytes: assembleGlbWith(json, binLength, (out, at) => state.bin.writeInto(out, at)) }, ...imageFiles];
  }
  const bin = state.bin.finish();
  if (options.embedBuffers) {
    finishLists(state, bin.byteLength, `data:application/octet-stream;base64,${Buffer.from(bin.buffer, bin.byteOffset, bin.byteLength).toString('base64')}`);
    return [{ path: options.outPath, bytes: new TextEncoder().encode(`${JSON.stringify(json, null, 2)}\n`) }, ...imageFiles];
  }
  const binName = bufferFileName(options.outPath, bin);
  finishLists(state, bin.byteLength, encodeURIComponent(binName));
  const text = new TextEncoder().encode(`${JSON.stringify(json, null, 2)}\n`);
  const files: OutputFile[] = [{ path: options.outPath, bytes: text }];
  if (bin.byteLength > 0) files.push({ path: path.join(outDir, binName), bytes: bin });
  return [...files, ...imageFiles];
}
