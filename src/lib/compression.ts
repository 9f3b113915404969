/**
 * How each primitive's geometry came in and goes out (`--compression`), and the compressed
 * data the writer places: Draco streams made for baked primitives, meshopt settings per baked
 * primitive. Encoder settings come from the input where it records them (Draco quantization
 * bits per attribute and the encoding method; meshopt extension name and OCTAHEDRAL filter per
 * view), else the defaults below.
 * Based on: KHR_draco_mesh_compression, EXT_meshopt_compression / KHR_meshopt_compression and
 * KHR_mesh_quantization specifications; DESIGN.md (`--compression keep|none|draco|meshopt`).
 */
import { FLOAT, type Asset, type AttributeData, type PrimitiveReplacement } from '../mesh/asset.js';
import { TanframeError } from '../mesh/errors.js';
import { decodeDracoPrimitive, loadDracoEncoder, readDracoSettings, type DracoEncodeFn, type DracoStreamSettings } from '../io/draco.js';
import { needsQuantization } from '../io/gltfSemantics.js';
import type { DracoPrimitive, MeshoptPrimitive, WriteCompression } from '../io/gltfWrite.js';
import { loadMeshoptEncoder } from '../io/meshopt.js';
import type { CompressionMode } from './options.js';

/** How a primitive's geometry is stored. */
export type CompressionKind = 'draco' | 'meshopt' | 'quantized' | 'none';

/** A primitive's storage in the input and in the output. */
export interface PrimitiveCompression {
  in: CompressionKind;
  out: CompressionKind;
}

const DRACO = 'KHR_draco_mesh_compression';

/**
 * Draco quantization bits for attributes the input does not record (a new TANGENT, or a
 * primitive that was not Draco-compressed). Common practice, not a standard: 14 bits for
 * positions, 10 for normals and tangents, 12 for texture coordinates, 10 for colours; other
 * float attributes (weights, custom ones) are stored unquantized.
 */
export const DRACO_DEFAULT_BITS: Readonly<Record<string, number>> = { POSITION: 14, NORMAL: 10, TANGENT: 10, TEXCOORD: 12, COLOR: 10 };

/** Draco method for a primitive that was not Draco-compressed: edgebreaker (1), the usual exporters' choice (common practice). */
export const DRACO_DEFAULT_METHOD = 1;

/** The default bits for `semantic` (DRACO_DEFAULT_BITS), or null for unquantized. */
export function defaultDracoBits(semantic: string): number | null {
  const key = semantic.startsWith('TEXCOORD_') ? 'TEXCOORD' : semantic.startsWith('COLOR_') ? 'COLOR' : semantic;
  return Object.hasOwn(DRACO_DEFAULT_BITS, key) ? DRACO_DEFAULT_BITS[key] : null;
}

function isObject(v: unknown): v is Record<string, any> {
  return v !== null && typeof v === 'object' && !Array.isArray(v);
}

/** The JSON primitive of asset.primitives[i]. */
function jsonPrimitive(asset: Asset, i: number): any {
  const p = asset.primitives[i];
  return asset.json.meshes?.[p.mesh]?.primitives?.[p.primitive];
}

/** The meshopt views of the asset by view index. */
function meshoptViewsByIndex(asset: Asset): Map<number, { name: string; filter: string; byteStride: number }> {
  return new Map((asset.meshoptViews ?? []).map((v) => [v.view, v]));
}

/** The accessor indices of a JSON primitive: attributes, targets, indices. */
function primitiveAccessors(prim: any): number[] {
  const out: number[] = [];
  for (const map of [prim?.attributes, ...(Array.isArray(prim?.targets) ? prim.targets : [])]) {
    if (isObject(map)) for (const v of Object.values(map)) if (typeof v === 'number') out.push(v);
  }
  if (typeof prim?.indices === 'number') out.push(prim.indices);
  return out;
}

/** True when some attribute of `attributes` uses a format only KHR_mesh_quantization allows. */
function quantizedAttributes(attributes: Record<string, AttributeData>): boolean {
  return Object.entries(attributes).some(([sem, a]) => needsQuantization(sem, a.type, a.componentType, a.normalized, false));
}

/** How primitive `i` of the asset is stored in the input. */
export function compressionIn(asset: Asset, i: number): CompressionKind {
  if (asset.container === 'obj') return 'none';
  const prim = jsonPrimitive(asset, i);
  if (isObject(prim?.extensions?.[DRACO])) return 'draco';
  const views = meshoptViewsByIndex(asset);
  if (views.size > 0) {
    for (const a of primitiveAccessors(prim)) {
      const view = asset.json.accessors?.[a]?.bufferView;
      if (typeof view === 'number' && views.has(view)) return 'meshopt';
    }
  }
  return quantizedAttributes(asset.primitives[i].attributes) ? 'quantized' : 'none';
}

/** The meshopt settings for a baked primitive: the input's extension name and OCTAHEDRAL filters (by semantic). */
function meshoptSettings(asset: Asset, i: number, tangentFollowsInput: boolean): MeshoptPrimitive {
  const prim = jsonPrimitive(asset, i);
  const views = meshoptViewsByIndex(asset);
  let name = 'EXT_meshopt_compression';
  const octahedral: Record<string, 4 | 8> = {};
  for (const a of primitiveAccessors(prim)) {
    const v = views.get(asset.json.accessors?.[a]?.bufferView);
    if (v) name = v.name;
  }
  for (const sem of ['NORMAL', 'TANGENT']) {
    const v = views.get(asset.json.accessors?.[prim?.attributes?.[sem]]?.bufferView);
    if (v && v.filter === 'OCTAHEDRAL' && (v.byteStride === 4 || v.byteStride === 8)) octahedral[sem] = v.byteStride;
  }
  // A new TANGENT takes the encoding of the input's NORMAL, unless --tangent-type named one.
  if (!tangentFollowsInput) delete octahedral.TANGENT;
  else if (octahedral.NORMAL && !octahedral.TANGENT) octahedral.TANGENT = octahedral.NORMAL;
  return { name, octahedral };
}

/** Per-component min and max. */
function bounds(array: ArrayLike<number>, itemSize: number): { min: number[]; max: number[] } {
  const min = new Array<number>(itemSize).fill(Infinity);
  const max = new Array<number>(itemSize).fill(-Infinity);
  for (let i = 0; i < array.length; i++) {
    const c = i % itemSize;
    if (array[i] < min[c]) min[c] = array[i];
    if (array[i] > max[c]) max[c] = array[i];
  }
  for (let c = 0; c < itemSize; c++) {
    if (!Number.isFinite(min[c])) min[c] = 0;
    if (!Number.isFinite(max[c])) max[c] = 0;
  }
  return { min, max };
}

/**
 * Encodes one replacement as a Draco stream and decodes it back (with our reader's decoder)
 * for the counts and POSITION bounds its accessors declare. Float attributes are quantized
 * with the input's bits (`settings`) or the defaults; integer ones are stored as they are.
 * With morph targets the sequential method keeps the vertex order the targets' accessors follow.
 */
async function dracoPrimitive(encode: DracoEncodeFn, r: PrimitiveReplacement, settings: DracoStreamSettings | null, where: string): Promise<DracoPrimitive> {
  const semantics = Object.keys(r.attributes).sort();
  const first = r.attributes[semantics[0]];
  const vertexCount = first.array.length / first.itemSize;
  const attributes = semantics.map((semantic) => {
    const a = r.attributes[semantic];
    const recorded = settings?.attributes[semantic];
    return {
      semantic,
      array: a.array,
      itemSize: a.itemSize,
      bits: a.array instanceof Float32Array ? (recorded ? recorded.bits : defaultDracoBits(semantic)) : null,
    };
  });
  const method = r.targets.length > 0 ? 0 : (settings?.method ?? DRACO_DEFAULT_METHOD);
  const encoded = encode({ attributes, indices: r.indices, vertexCount, method });
  const back = await decodeDracoPrimitive(encoded.bytes, encoded.ids, where);
  if (back.indices.length !== r.indices.length || (method === 0 && back.vertexCount !== vertexCount)) {
    throw new TanframeError('internal', `${where}: the Draco stream made for the baked geometry does not decode to it`);
  }
  const accessors: DracoPrimitive['accessors'] = {};
  for (const semantic of semantics) {
    const a = r.attributes[semantic];
    const float = a.array instanceof Float32Array;
    const entry: DracoPrimitive['accessors'][string] = { componentType: float ? FLOAT : a.componentType, normalized: float ? false : a.normalized, type: a.type };
    // Source: glTF 2.0 specification, 3.7.2.1: POSITION min/max, here over the values the stream decodes to.
    if (semantic === 'POSITION') Object.assign(entry, bounds(back.attributes.POSITION.array, a.itemSize));
    accessors[semantic] = entry;
  }
  return { bytes: encoded.bytes, ids: encoded.ids, vertexCount: back.vertexCount, indexCount: back.indices.length, accessors };
}

/** What planCompression gives: the writer's settings and each primitive's storage in and out. */
export interface CompressionPlan {
  write: WriteCompression;
  primitives: PrimitiveCompression[];
}

/**
 * Plans the output's compression for `mode`: a baked primitive (one with a replacement) goes
 * out as it came in with 'keep' (Draco as Draco, meshopt as meshopt), Draco or meshopt with
 * 'draco' / 'meshopt', decoded with 'none'; a primitive that is not baked keeps its stored
 * bytes except with 'none'. With `tangentFollowsInput` (no `--tangent-type`) and 'keep', a new
 * TANGENT goes through the OCTAHEDRAL filter where the input's NORMAL did. Loads the encoders
 * only when needed; deterministic.
 */
export async function planCompression(asset: Asset, replacements: Map<number, PrimitiveReplacement>, mode: CompressionMode, tangentFollowsInput = true): Promise<CompressionPlan> {
  const write: WriteCompression = { keepCompressed: mode !== 'none', draco: new Map(), meshopt: new Map() };
  const primitives: PrimitiveCompression[] = [];
  const wantDraco: number[] = [];
  for (let i = 0; i < asset.primitives.length; i++) {
    const input = compressionIn(asset, i);
    const r = replacements.get(i);
    let out: CompressionKind;
    if (r) {
      const target = mode === 'keep' ? (input === 'draco' || input === 'meshopt' ? input : null) : mode === 'none' ? null : mode;
      out = target ?? (quantizedAttributes(r.attributes) ? 'quantized' : 'none');
    } else if (mode === 'none' && (input === 'draco' || input === 'meshopt')) {
      out = quantizedAttributes(asset.primitives[i].attributes) ? 'quantized' : 'none';
    } else out = input;
    primitives.push({ in: input, out });
    if (!r) continue;
    if (out === 'draco') wantDraco.push(i);
    if (out === 'meshopt') write.meshopt.set(i, meshoptSettings(asset, i, tangentFollowsInput && mode === 'keep'));
  }
  if (write.meshopt.size > 0) write.meshoptEncoders = await loadMeshoptEncoder();
  if (wantDraco.length > 0) {
    const encode = await loadDracoEncoder();
    for (const i of wantDraco) {
      const r = replacements.get(i)!;
      if (write.draco.has(r)) continue;
      const p = asset.primitives[i];
      const where = `mesh ${p.mesh} primitive ${p.primitive}`;
      const ext = jsonPrimitive(asset, i)?.extensions?.[DRACO];
      const stream = isObject(ext) ? dracoStream(asset, ext.bufferView) : null;
      const settings = stream ? await readDracoSettings(stream, ext.attributes, where) : null;
      write.draco.set(r, await dracoPrimitive(encode, r, settings, where));
    }
  }
  return { write, primitives };
}

/** The bytes of buffer view `i` as the reader resolved them. */
function dracoStream(asset: Asset, i: number): Uint8Array {
  const v = asset.json.bufferViews[i];
  const offset = v.byteOffset ?? 0;
  return asset.buffers[v.buffer].subarray(offset, offset + v.byteLength);
}
