/**
 * Reads a .gltf or .glb file into an Asset: checked JSON, resolved buffers, every mesh
 * primitive decoded into dense typed arrays, external images located.
 * Based on: glTF 2.0 specification, sections 3.6 (binary data storage: buffers, buffer views,
 * accessors), 3.7.2 (mesh primitives, morph targets), 3.8.3 (images), 3.12 (extensions) and
 * 4.4 (GLB); KHR_mesh_quantization; KHR_draco_mesh_compression and EXT_meshopt_compression /
 * KHR_meshopt_compression (decoded, see draco.ts and meshopt.ts).
 *
 * Nothing in the file is trusted before it is checked: every fault becomes a TanframeError
 * with a stable code and a one-line message (the caller prefixes the file name).
 */
import * as path from 'node:path';
import {
  BYTE,
  MODE_TRIANGLES,
  SHORT,
  UNSIGNED_BYTE,
  UNSIGNED_INT,
  UNSIGNED_SHORT,
  type Asset,
  type AttributeData,
  type ExternalImage,
  type PrimitiveData,
} from '../mesh/asset.js';
import { allocComponents } from '../mesh/decode.js';
import { TanframeError } from '../mesh/errors.js';
import { readInputBytes } from './files.js';
import { looksLikeGlb, parseGlb } from './glb.js';
import {
  DECODE_BUDGET_BASE,
  DECODE_BUDGET_FACTOR,
  chargeBudget,
  checkAccessor,
  decodeAccessor,
  isIndex,
  type AccessorSpec,
  type DecodeBudget,
  type ViewTable,
} from './gltfAccessor.js';
import { accessorRefs, bufferViewRefs, type IndexRef } from './gltfRefs.js';
import { MAX_JSON_DEPTH, checkJsonBudget, jsonParseReason } from './jsonBudget.js';
import { checkAttributeFormat, formatName } from './gltfSemantics.js';
import { decodeDracoPrimitive, readDracoHeader } from './draco.js';
import { triangleCount } from '../mesh/triangulate.js';
import { decodeMeshoptViews, isMeshoptFallback } from './meshopt.js';
import { checkTriangleLimit, declaredGltfTriangles, type ReadLimits } from './limits.js';
import { diskResources, type ResourceSource } from './resources.js';

/**
 * Required extensions we can process: ones that do not change how geometry is stored, plus the
 * geometry compressions we decode (and the writer can write again).
 */
const SAFE_REQUIRED_EXTENSIONS = new Set([
  'KHR_mesh_quantization',
  'KHR_draco_mesh_compression',
  'EXT_meshopt_compression',
  'KHR_meshopt_compression',
  'KHR_texture_transform',
  'KHR_texture_basisu',
  'EXT_texture_webp',
  'EXT_texture_avif',
  'KHR_lights_punctual',
  'EXT_lights_image_based',
  'KHR_materials_variants',
  'KHR_animation_pointer',
  'KHR_xmp_json_ld',
  'EXT_mesh_gpu_instancing',
  'MSFT_texture_dds',
]);

const DRACO = 'KHR_draco_mesh_compression';

/** Everything decoding needs, shared by the helpers below. */
interface ReadContext {
  json: any;
  views: ViewTable;
  budget: DecodeBudget;
  quantized: boolean;
  /** Decoded vertex-attribute accessors by index (an accessor shared by primitives decodes once). */
  decoded: Map<number, AttributeData>;
  /** Decoded Draco primitives by "bufferView/attribute map" (primitives sharing a stream decode it once). */
  draco: Map<string, Promise<DracoDecoded>>;
}

/** A Draco stream decoded into accessor-typed attributes. */
interface DracoDecoded {
  attributes: Record<string, AttributeData>;
  indices: Uint32Array;
}

function badGltf(message: string): never {
  throw new TanframeError('bad-gltf', message);
}

function isObject(v: unknown): v is Record<string, any> {
  return v !== null && typeof v === 'object' && !Array.isArray(v);
}

/** `json[key]` as an array ([] when absent); 'bad-gltf' when present but not an array of objects. */
function arrayOf(json: any, key: string): any[] {
  const v = json[key];
  if (v === undefined) return [];
  if (!Array.isArray(v)) badGltf(`'${key}' is not an array`);
  for (let i = 0; i < v.length; i++) if (!isObject(v[i])) badGltf(`${key}[${i}] is not an object`);
  return v;
}

/**
 * Parses .gltf text: UTF-8 (BOM tolerated), depth and size-aware budget checked on the bytes
 * before parsing (checkJsonBudget), JSON, an object. A parse error names the position only.
 */
function parseGltfJson(bytes: Uint8Array): any {
  checkJsonBudget(bytes, MAX_JSON_DEPTH, 'the JSON');
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    throw new TanframeError('bad-json', 'the file is not valid UTF-8 text');
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (err) {
    throw new TanframeError('bad-json', `the JSON does not parse (${jsonParseReason(err)})`);
  }
  if (!isObject(json)) badGltf('the JSON is not an object');
  return json;
}

/** Checks asset.version (2.x) and the shape of the top-level arrays we use. */
function checkTopLevel(json: any): void {
  if (!isObject(json.asset) || typeof json.asset.version !== 'string') badGltf("missing 'asset.version'");
  const major = /^(\d+)\.\d+$/.exec(json.asset.version);
  if (!major) badGltf(`asset.version '${json.asset.version}' is not of the form major.minor`);
  if (major[1] !== '2') {
    throw new TanframeError('unsupported-format', `glTF version ${json.asset.version} is not supported (only 2.x)`);
  }
  for (const key of ['buffers', 'bufferViews', 'accessors', 'meshes', 'images', 'materials']) arrayOf(json, key);
  for (const key of ['extensionsUsed', 'extensionsRequired']) {
    const v = json[key];
    if (v !== undefined && (!Array.isArray(v) || v.some((s) => typeof s !== 'string'))) badGltf(`'${key}' is not an array of strings`);
  }
}

/**
 * Refuses required extensions we do not know: a required extension may change how geometry
 * is stored or read, and guessing would corrupt the output.
 */
function checkRequiredExtensions(json: any): void {
  for (const name of (json.extensionsRequired ?? []) as string[]) {
    if (!SAFE_REQUIRED_EXTENSIONS.has(name) && !name.startsWith('KHR_materials_')) {
      throw new TanframeError('unsupported-feature', `the required extension ${name} is not supported (it may change how geometry is stored; refusing rather than guessing)`);
    }
  }
}

/**
 * Reads an external buffer or image file; ENOENT -> null, other errors (a pipe or device
 * included: never read, so it cannot block or feed endless data) -> 'read-failed'.
 */
async function readResourceFile(file: string, what: string, resources: ResourceSource): Promise<Uint8Array | null> {
  try {
    const b = await resources.readFile(file);
    return new Uint8Array(b.buffer, b.byteOffset, b.byteLength);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'ENOENT' || code === 'ENOTDIR') return null;
    throw new TanframeError('read-failed', `cannot read ${what}: ${code === 'EISDIR' ? 'it is a folder' : code === 'EACCES' ? 'permission denied' : code === 'ENOTREG' ? 'not a regular file' : (code ?? 'error')}`);
  }
}

/**
 * The bytes of buffer `i`: GLB BIN chunk, data: URI or external file (inside `baseDir`); null
 * for a meshopt fallback buffer without data (no uri, or a file that is absent).
 */
async function bufferBytes(json: any, i: number, bin: Uint8Array | null, isGlb: boolean, baseDir: string, resources: ResourceSource): Promise<Uint8Array | null> {
  const b = json.buffers[i];
  const fallback = isMeshoptFallback(b);
  if (b.uri === undefined) {
    if (fallback) return null;
    if (isGlb && i === 0) {
      if (!bin) throw new TanframeError('bad-glb', 'buffer 0 has no uri but the GLB has no BIN chunk');
      return bin;
    }
    badGltf(`buffer ${i} has no uri${isGlb ? ' (only buffer 0 can use the GLB BIN chunk)' : ''}`);
  }
  if (typeof b.uri !== 'string') badGltf(`buffer ${i} uri is not a string`);
  const res = resources.resolve(b.uri, baseDir);
  if (res.kind === 'data') return res.bytes;
  const bytes = await readResourceFile(res.path, `buffer ${i} '${b.uri}'`, resources);
  if (!bytes && fallback) return null;
  if (!bytes) throw new TanframeError('missing-resource', `buffer ${i} file '${b.uri}' not found`);
  return bytes;
}

/** Resolved buffers, and which of them are meshopt fallbacks without data (zero-filled). */
interface ResolvedBuffers {
  buffers: Uint8Array[];
  emptyFallbacks: Set<number>;
}

/**
 * Resolves every buffer and checks its declared byteLength fits the available bytes. A meshopt
 * fallback buffer without data becomes zeros of its declared length (charged to the budget);
 * decodeMeshoptViews fills it.
 */
async function resolveBuffers(json: any, bin: Uint8Array | null, isGlb: boolean, baseDir: string, budget: DecodeBudget, resources: ResourceSource): Promise<ResolvedBuffers> {
  const list = arrayOf(json, 'buffers');
  const out: Uint8Array[] = [];
  const emptyFallbacks = new Set<number>();
  for (let i = 0; i < list.length; i++) {
    const declared = list[i].byteLength;
    if (!isIndex(declared) || declared < 1) badGltf(`buffer ${i} byteLength ${JSON.stringify(declared)} is not a positive integer`);
    const bytes = await bufferBytes(json, i, bin, isGlb, baseDir, resources);
    if (bytes === null) {
      chargeBudget(budget, declared, `fallback buffer ${i}`);
      emptyFallbacks.add(i);
      out.push(new Uint8Array(declared));
      continue;
    }
    if (declared > bytes.byteLength) badGltf(`buffer ${i} declares ${declared} bytes but only ${bytes.byteLength} are available`);
    out.push(bytes.subarray(0, declared));
  }
  return { buffers: out, emptyFallbacks };
}

/** Checks every buffer view lies inside its buffer and has a legal byteStride. */
function checkBufferViews(json: any, buffers: Uint8Array[]): ViewTable {
  const list = arrayOf(json, 'bufferViews');
  const table: ViewTable = { bytes: [], strides: [] };
  for (let i = 0; i < list.length; i++) {
    const v = list[i];
    if (!isIndex(v.buffer) || v.buffer >= buffers.length) badGltf(`bufferView ${i} names buffer ${JSON.stringify(v.buffer)}, which does not exist`);
    if (!isIndex(v.byteLength) || v.byteLength < 1) badGltf(`bufferView ${i} byteLength is not a positive integer`);
    const offset = v.byteOffset ?? 0;
    if (!isIndex(offset)) badGltf(`bufferView ${i} byteOffset is not a non-negative integer`);
    const size = buffers[v.buffer].byteLength;
    if (offset + v.byteLength > size) {
      badGltf(`bufferView ${i} (offset ${offset}, length ${v.byteLength}) overruns buffer ${v.buffer} (${size} bytes)`);
    }
    // Source: glTF 2.0 specification, bufferView.byteStride: 4..252, a multiple of 4.
    if (v.byteStride !== undefined && (!isIndex(v.byteStride) || v.byteStride < 4 || v.byteStride > 252 || v.byteStride % 4 !== 0)) {
      badGltf(`bufferView ${i} byteStride ${JSON.stringify(v.byteStride)} is not a multiple of 4 in 4..252`);
    }
    table.bytes.push(buffers[v.buffer].subarray(offset, offset + v.byteLength));
    table.strides.push(v.byteStride);
  }
  return table;
}

/** Checks the shape of json.meshes (primitives, attributes, targets, indices, mode, material). */
function checkMeshes(json: any): void {
  const meshes = arrayOf(json, 'meshes');
  const materialCount = arrayOf(json, 'materials').length;
  for (let m = 0; m < meshes.length; m++) {
    const prims = meshes[m].primitives;
    if (!Array.isArray(prims) || prims.length === 0) badGltf(`mesh ${m} has no primitives`);
    for (let p = 0; p < prims.length; p++) {
      const where = `mesh ${m} primitive ${p}`;
      const prim = prims[p];
      if (!isObject(prim)) badGltf(`${where} is not an object`);
      if (!isObject(prim.attributes) || Object.keys(prim.attributes).length === 0) badGltf(`${where} has no attributes`);
      const targets = prim.targets ?? [];
      if (!Array.isArray(targets) || targets.some((t: unknown) => !isObject(t))) badGltf(`${where} targets is not an array of objects`);
      const mode = prim.mode ?? MODE_TRIANGLES;
      if (!Number.isInteger(mode) || mode < 0 || mode > 6) badGltf(`${where} mode ${JSON.stringify(prim.mode)} is not 0..6`);
      if (prim.material !== undefined && (!isIndex(prim.material) || prim.material >= materialCount)) {
        badGltf(`${where} material ${JSON.stringify(prim.material)} does not exist`);
      }
      for (const map of [prim.attributes, ...targets]) {
        for (const [sem, acc] of Object.entries(map)) {
          if (sem === '__proto__') badGltf(`${where} has an attribute named '__proto__', which is not supported`);
          if (!isIndex(acc)) throw new TanframeError('bad-accessor', `${where} ${sem} accessor ${JSON.stringify(acc)} is not an index`);
        }
      }
      if (prim.indices !== undefined && !isIndex(prim.indices)) {
        throw new TanframeError('bad-accessor', `${where} indices ${JSON.stringify(prim.indices)} is not an index`);
      }
    }
  }
}

/** Throws `code` for the first reference that names no element of a `length`-long array. */
function checkRefs(refs: IndexRef[], length: number, what: string, code: 'bad-accessor' | 'bad-gltf'): void {
  for (const r of refs) {
    const v = r.holder[r.key];
    if (!isIndex(v) || v >= length) throw new TanframeError(code, `${r.label} names ${what} ${JSON.stringify(v)}, which does not exist`);
  }
}

/**
 * Checks every accessor and buffer-view reference we know of (skins, animations, instancing,
 * images, Draco primitives, meshes) names an existing element, so the writer can rely on them.
 */
function checkReferences(json: any): void {
  checkRefs(accessorRefs(json, () => false), arrayOf(json, 'accessors').length, 'accessor', 'bad-accessor');
  checkRefs(bufferViewRefs(json), arrayOf(json, 'bufferViews').length, 'bufferView', 'bad-gltf');
}

/** Accessor indices that primitives use as vertex attributes (byteStride applies to them). */
function vertexAccessors(json: any): Set<number> {
  const set = new Set<number>();
  for (const mesh of arrayOf(json, 'meshes')) {
    for (const prim of mesh.primitives) {
      for (const map of [prim.attributes, ...(prim.targets ?? [])]) for (const a of Object.values(map)) set.add(a as number);
    }
  }
  return set;
}

/**
 * Checks every accessor in the file (fields, references, bounds) so that later stages,
 * the writer included, can copy any referenced data without further checks.
 */
function checkAllAccessors(json: any, views: ViewTable): void {
  const vertex = vertexAccessors(json);
  const list = arrayOf(json, 'accessors');
  for (let i = 0; i < list.length; i++) checkAccessor(json, i, views, vertex.has(i));
}

/** Decodes one attribute (or morph-target attribute) accessor after checking its format. */
function decodeAttribute(ctx: ReadContext, semantic: string, index: number, isTarget: boolean, where: string): AttributeData {
  const spec = checkAccessor(ctx.json, index, ctx.views, true);
  const reason = checkAttributeFormat(semantic, spec.type, spec.componentType, spec.normalized, isTarget, ctx.quantized);
  if (reason) throw new TanframeError('bad-accessor', `${where}: accessor ${index}: ${reason}`);
  let data = ctx.decoded.get(index);
  if (!data) {
    data = {
      array: decodeAccessor(spec, ctx.views, true, ctx.budget),
      itemSize: spec.itemSize,
      type: spec.type,
      componentType: spec.componentType,
      normalized: spec.normalized,
    };
    ctx.decoded.set(index, data);
  }
  return data;
}

/**
 * Decodes an attribute map, checking every accessor has `count` elements (set by the first when
 * null). Semantics present in `decodedAlready` (Draco-decoded data) take that data instead.
 */
function decodeAttributeMap(
  ctx: ReadContext,
  map: Record<string, number>,
  isTarget: boolean,
  where: string,
  counts: { value: number | null },
  decodedAlready: Record<string, AttributeData> = {},
): Record<string, AttributeData> {
  const out: Record<string, AttributeData> = {};
  for (const [semantic, index] of Object.entries(map)) {
    const data = Object.hasOwn(decodedAlready, semantic) ? decodedAlready[semantic] : decodeAttribute(ctx, semantic, index, isTarget, where);
    const count = data.array.length / data.itemSize;
    if (counts.value === null) counts.value = count;
    if (count !== counts.value) {
      throw new TanframeError('bad-accessor', `${where}: ${isTarget ? 'morph target ' : ''}${semantic} has ${count} elements but the other attributes have ${counts.value}`);
    }
    out[semantic] = data;
  }
  return out;
}

/** Decodes the indices accessor, widened to Uint32, each checked against `vertexCount`. */
function decodeIndices(ctx: ReadContext, index: number, vertexCount: number, where: string): Uint32Array {
  const spec: AccessorSpec = checkAccessor(ctx.json, index, ctx.views, false);
  const ct = spec.componentType;
  // Source: glTF 2.0 specification, mesh.primitive.indices: SCALAR of unsigned byte/short/int.
  if (spec.type !== 'SCALAR' || (ct !== UNSIGNED_BYTE && ct !== UNSIGNED_SHORT && ct !== UNSIGNED_INT)) {
    throw new TanframeError('bad-accessor', `${where}: indices accessor ${index} must be SCALAR unsigned byte, short or int, not ${spec.type} ${formatName(ct, spec.normalized)}`);
  }
  const raw = decodeAccessor(spec, ctx.views, false, ctx.budget);
  let out: Uint32Array;
  if (raw instanceof Uint32Array) {
    out = raw;
  } else {
    chargeBudget(ctx.budget, raw.length * 4, `indices accessor ${index}`);
    out = new Uint32Array(raw.length);
    out.set(raw);
  }
  for (let i = 0; i < out.length; i++) {
    if (out[i] >= vertexCount) {
      throw new TanframeError('bad-index', `${where}: index ${out[i]} at position ${i} is out of range (${vertexCount} vertices)`);
    }
  }
  return out;
}

/** The checked KHR_draco_mesh_compression object of a primitive, or null when it has none. */
function dracoExtensionOf(ctx: ReadContext, prim: any, where: string): { bufferView: number; attributes: Record<string, number> } | null {
  const ext = prim.extensions?.[DRACO];
  if (ext === undefined) return null;
  if (!isObject(ext)) badGltf(`${where}: ${DRACO} is not an object`);
  if (!isIndex(ext.bufferView) || ext.bufferView >= ctx.views.bytes.length) badGltf(`${where}: ${DRACO} bufferView ${JSON.stringify(ext.bufferView)} does not exist`);
  if (!isObject(ext.attributes)) badGltf(`${where}: ${DRACO} attributes is not an object`);
  for (const [semantic, id] of Object.entries(ext.attributes)) {
    if (!isIndex(id)) badGltf(`${where}: ${DRACO} attribute ${semantic} id ${JSON.stringify(id)} is not a non-negative integer`);
    // Source: KHR_draco_mesh_compression specification: the extension's attributes are a subset of the primitive's.
    if (!Object.hasOwn(prim.attributes, semantic)) badGltf(`${where}: ${DRACO} attribute ${semantic} is not an attribute of the primitive`);
  }
  return { bufferView: ext.bufferView, attributes: ext.attributes };
}

/** Copies Draco-decoded values into an array of the accessor's component type (normalized floats quantized back). */
function toAccessorType(values: ArrayLike<number>, spec: AccessorSpec): AttributeData['array'] {
  const out = allocComponents(spec.componentType, values.length);
  if (out instanceof Float32Array || !(values instanceof Float32Array) || !spec.normalized) {
    for (let i = 0; i < values.length; i++) out[i] = values[i];
    return out;
  }
  const max = spec.componentType === BYTE ? 127 : spec.componentType === UNSIGNED_BYTE ? 255 : spec.componentType === SHORT ? 32767 : 65535;
  for (let i = 0; i < values.length; i++) out[i] = Math.round(values[i] * max);
  return out;
}

function badDraco(message: string): never {
  throw new TanframeError('bad-draco', message);
}

/**
 * Decodes (once per stream and attribute map) the Draco data of a primitive into accessor-typed
 * attributes. The stream's header is read first: its triangle count must be the one the
 * primitive declares (indices accessor, else the vertex count, by mode; so --max-triangles and
 * the per-byte limit, checked on the declared counts, hold for it), its vertex count the one
 * the accessors declare, and what the decoder will allocate for them is charged to the budget
 * before it runs; the decoded arrays are checked against the same counts before use.
 */
function decodeDraco(ctx: ReadContext, prim: any, ext: { bufferView: number; attributes: Record<string, number> }, where: string): Promise<DracoDecoded> {
  const semantics = Object.keys(ext.attributes).sort();
  const key = `${ext.bufferView}|${semantics.map((s) => `${s}=${ext.attributes[s]}=${prim.attributes[s]}`).join(',')}`;
  let pending = ctx.draco.get(key);
  if (!pending) {
    const stream = ctx.views.bytes[ext.bufferView];
    const header = readDracoHeader(stream, where);
    const specs: AccessorSpec[] = [];
    let decodedBytes = header.faces * 12;
    for (const semantic of semantics) {
      const index = prim.attributes[semantic];
      const spec = checkAccessor(ctx.json, index, ctx.views, true);
      const reason = checkAttributeFormat(semantic, spec.type, spec.componentType, spec.normalized, false, ctx.quantized);
      if (reason) throw new TanframeError('bad-accessor', `${where}: accessor ${index}: ${reason}`);
      const fits = header.method === 0 ? header.vertices === spec.count : header.vertices <= spec.count;
      if (!fits) badDraco(`${where}: the ${DRACO} stream holds ${header.vertices} vertices but accessor ${index} (${semantic}) declares ${spec.count}`);
      decodedBytes += spec.count * spec.itemSize * 4;
      specs.push(spec);
    }
    const declared = prim.indices !== undefined ? checkAccessor(ctx.json, prim.indices, ctx.views, false).count : (specs[0]?.count ?? 0);
    const triangles = triangleCount(prim.mode ?? MODE_TRIANGLES, declared);
    if (header.faces !== triangles) badDraco(`${where}: the ${DRACO} stream holds ${header.faces} triangles but the primitive declares ${triangles}`);
    chargeBudget(ctx.budget, decodedBytes, `${where} ${DRACO} data`);
    pending = (async () => {
      const mesh = await decodeDracoPrimitive(stream, ext.attributes, where);
      if (mesh.indices.length !== header.faces * 3) badDraco(`${where}: the ${DRACO} stream decodes to ${mesh.indices.length / 3} triangles, not the ${header.faces} its header declares`);
      const attributes: Record<string, AttributeData> = {};
      semantics.forEach((semantic, i) => {
        const spec = specs[i];
        const d = mesh.attributes[semantic];
        if (d.itemSize !== spec.itemSize || d.array.length !== spec.count * spec.itemSize) {
          badDraco(`${where}: ${DRACO} attribute ${semantic} decodes to ${d.array.length / d.itemSize} x ${d.itemSize} values but accessor ${spec.index} declares ${spec.count} x ${spec.itemSize}`);
        }
        attributes[semantic] = { array: toAccessorType(d.array, spec), itemSize: spec.itemSize, type: spec.type, componentType: spec.componentType, normalized: spec.normalized };
      });
      return { attributes, indices: mesh.indices };
    })();
    ctx.draco.set(key, pending);
  }
  return pending;
}

/**
 * Decodes one primitive (attributes, targets, indices). A Draco-compressed primitive takes its
 * compressed attributes and its faces (a triangle list, so mode becomes TRIANGLES) from the
 * Draco stream; other attributes and morph targets come from their accessors.
 */
async function decodePrimitive(ctx: ReadContext, m: number, p: number): Promise<PrimitiveData> {
  const mesh = ctx.json.meshes[m];
  const prim = mesh.primitives[p];
  const where = `mesh ${m} primitive ${p}`;
  const ext = dracoExtensionOf(ctx, prim, where);
  const draco = ext ? await decodeDraco(ctx, prim, ext, where) : null;
  const counts = { value: null as number | null };
  const attributes = decodeAttributeMap(ctx, prim.attributes, false, where, counts, draco?.attributes);
  const targets = (prim.targets ?? []).map((t: Record<string, number>) => decodeAttributeMap(ctx, t, true, where, counts));
  const vertexCount = counts.value ?? 0;
  let indices: Uint32Array | null;
  if (draco) {
    for (let i = 0; i < draco.indices.length; i++) {
      if (draco.indices[i] >= vertexCount) throw new TanframeError('bad-index', `${where}: ${DRACO} index ${draco.indices[i]} is out of range (${vertexCount} vertices)`);
    }
    indices = draco.indices;
  } else {
    indices = prim.indices === undefined ? null : decodeIndices(ctx, prim.indices, vertexCount, where);
  }
  return {
    mesh: m,
    primitive: p,
    meshName: typeof mesh.name === 'string' ? mesh.name : null,
    material: prim.material ?? null,
    mode: draco ? MODE_TRIANGLES : (prim.mode ?? MODE_TRIANGLES),
    attributes,
    indices,
    targets,
    faces: null,
  };
}

/** Decodes every primitive of every mesh, in json order. */
async function decodeAllPrimitives(ctx: ReadContext): Promise<PrimitiveData[]> {
  const out: PrimitiveData[] = [];
  const meshes = arrayOf(ctx.json, 'meshes');
  for (let m = 0; m < meshes.length; m++) {
    for (let p = 0; p < meshes[m].primitives.length; p++) out.push(await decodePrimitive(ctx, m, p));
  }
  return out;
}

/** Locates images named by a (non-data:) URI; a missing file is a warning, not a failure. */
async function resolveImages(json: any, baseDir: string, warnings: string[], resources: ResourceSource): Promise<ExternalImage[]> {
  const images = arrayOf(json, 'images');
  const out: ExternalImage[] = [];
  for (let i = 0; i < images.length; i++) {
    const uri = images[i].uri;
    if (uri === undefined) continue;
    if (typeof uri !== 'string') badGltf(`image ${i} uri is not a string`);
    if (/^data:/i.test(uri)) continue;
    const res = resources.resolve(uri, baseDir);
    if (res.kind !== 'file') continue;
    const bytes = await readResourceFile(res.path, `image '${uri}'`, resources);
    if (!bytes) warnings.push(`image '${uri}' not found; its URI is kept`);
    out.push({ image: i, uri, path: res.path, bytes });
  }
  return out;
}

/** True when the asset declares KHR_mesh_quantization (extensionsUsed or extensionsRequired). */
function usesQuantization(json: any): boolean {
  const name = 'KHR_mesh_quantization';
  return (json.extensionsUsed ?? []).includes(name) || (json.extensionsRequired ?? []).includes(name);
}

/**
 * Decodes glTF or GLB bytes into an Asset. `sourcePath` names the file (its folder resolves
 * external URIs; '.glb' or the 'glTF' magic selects the GLB container). Throws TanframeError:
 * 'empty-file', 'bad-glb', 'bad-json', 'bad-gltf', 'bad-accessor', 'bad-index', 'bad-draco', 'bad-uri',
 * 'missing-resource', 'read-failed', 'unsupported-format', 'unsupported-feature', 'too-large'
 * (also when the primitives declare more triangles than `limits` allow, checked before decoding).
 * External buffers and images come from `resources` (default: the files beside `sourcePath`).
 */
export async function readGltfBytes(bytes: Uint8Array, sourcePath: string, limits: ReadLimits = {}, resources: ResourceSource = diskResources): Promise<Asset> {
  if (bytes.length === 0) throw new TanframeError('empty-file', 'the file is empty (0 bytes)');
  const isGlb = looksLikeGlb(bytes) || path.extname(sourcePath).toLowerCase() === '.glb';
  const { json, bin } = isGlb ? parseGlb(bytes) : { json: parseGltfJson(bytes), bin: null };
  checkTopLevel(json);
  checkRequiredExtensions(json);
  const baseDir = path.dirname(path.resolve(sourcePath));
  const firstLimit = DECODE_BUDGET_BASE + DECODE_BUDGET_FACTOR * bytes.byteLength;
  const budget: DecodeBudget = { remaining: firstLimit, limit: firstLimit };
  const resolved = await resolveBuffers(json, bin, isGlb, baseDir, budget, resources);
  let extra = 0;
  resolved.buffers.forEach((b, i) => { if (!resolved.emptyFallbacks.has(i)) extra += DECODE_BUDGET_FACTOR * b.byteLength; });
  budget.limit += extra;
  budget.remaining += extra;
  const meshopt = await decodeMeshoptViews(json, resolved.buffers, resolved.emptyFallbacks, budget);
  const buffers = meshopt.buffers;
  const views = checkBufferViews(json, buffers);
  checkMeshes(json);
  checkReferences(json);
  checkAllAccessors(json, views);
  checkTriangleLimit(declaredGltfTriangles(json), bytes.byteLength + buffers.reduce((s, b) => s + b.byteLength, 0), limits);
  const ctx: ReadContext = { json, views, budget, quantized: usesQuantization(json), decoded: new Map(), draco: new Map() };
  const primitives = await decodeAllPrimitives(ctx);
  const warnings: string[] = [];
  const externalImages = await resolveImages(json, baseDir, warnings, resources);
  const decompressed = [...(ctx.draco.size > 0 ? [DRACO] : []), ...meshopt.decoded];
  const asset: Asset = { sourcePath, container: isGlb ? 'glb' : 'gltf', json, buffers, externalImages, primitives, warnings, decompressed };
  if (meshopt.views.length > 0) asset.meshoptViews = meshopt.views;
  return asset;
}

/**
 * Reads a .gltf or .glb file into an Asset (see readGltfBytes). Decoded attribute arrays
 * may be shared between primitives that share an accessor: treat them as read-only.
 */
export async function readGltf(filePath: string, limits: ReadLimits = {}): Promise<Asset> {
  return readGltfBytes(await readInputBytes(filePath), filePath, limits);
}
