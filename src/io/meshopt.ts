/**
 * Decoding of meshopt-compressed buffer views (EXT_meshopt_compression and its Khronos
 * successor KHR_meshopt_compression) into plain bytes, so the rest of the reader sees an
 * uncompressed file, and the encoders the writer uses to store views compressed again.
 * Based on: EXT_meshopt_compression extension specification (buffer view extension object:
 * buffer, byteOffset, byteLength, byteStride, count, mode, filter; fallback buffers) and
 * KHR_meshopt_compression (same layout, adds the COLOR filter). The bitstream decoder is the
 * `meshoptimizer` package's WebAssembly decoder (its public `meshoptimizer/decoder` entry; the
 * module embeds the WebAssembly, so nothing is fetched at run time), loaded only when a file
 * has compressed views.
 */
import type { MeshoptViewRecord } from '../mesh/asset.js';
import { TanframeError } from '../mesh/errors.js';
import { chargeBudget, isIndex, type DecodeBudget } from './gltfAccessor.js';

/** The two extension names that share the meshopt buffer-view layout. */
export const MESHOPT_EXTENSIONS = ['EXT_meshopt_compression', 'KHR_meshopt_compression'] as const;

const MODES = new Set(['ATTRIBUTES', 'TRIANGLES', 'INDICES']);
const FILTERS: Record<string, readonly string[]> = {
  EXT_meshopt_compression: ['NONE', 'OCTAHEDRAL', 'QUATERNION', 'EXPONENTIAL'],
  KHR_meshopt_compression: ['NONE', 'OCTAHEDRAL', 'QUATERNION', 'EXPONENTIAL', 'COLOR'],
};

type DecodeFn = (target: Uint8Array, count: number, byteStride: number, source: Uint8Array, mode: string, filter: string) => Promise<void>;

let decoderPromise: Promise<DecodeFn> | null = null;

/** Loads the meshoptimizer package's decoder on first use and waits for its WebAssembly. */
function loadDecoder(): Promise<DecodeFn> {
  decoderPromise ??= (async () => {
    const { MeshoptDecoder } = await import('meshoptimizer/decoder');
    await MeshoptDecoder.ready;
    return async (target, count, byteStride, source, mode, filter) => {
      MeshoptDecoder.decodeGltfBuffer(target, count, byteStride, source, mode, filter);
    };
  })();
  return decoderPromise;
}

function isObject(v: unknown): v is Record<string, any> {
  return v !== null && typeof v === 'object' && !Array.isArray(v);
}

/** The meshopt extension object of a buffer view or buffer and its name, or null. */
export function meshoptExtensionOf(obj: unknown): { name: string; ext: any } | null {
  if (!isObject(obj) || !isObject(obj.extensions)) return null;
  for (const name of MESHOPT_EXTENSIONS) if (isObject(obj.extensions[name])) return { name, ext: obj.extensions[name] };
  return null;
}

/** True when buffer `b` is a meshopt fallback buffer (its bytes may be absent). */
export function isMeshoptFallback(b: unknown): boolean {
  const m = meshoptExtensionOf(b);
  return m !== null && m.ext.fallback === true;
}

/** A checked compressed view: where the stream is and what it decodes to. */
interface CompressedView {
  view: number;
  name: string;
  source: Uint8Array;
  target: number;
  targetOffset: number;
  byteLength: number;
  byteStride: number;
  count: number;
  mode: string;
  filter: string;
}

function bad(view: number, name: string, why: string): never {
  throw new TanframeError('bad-gltf', `bufferView ${view} ${name}: ${why}`);
}

/** Reads and checks the extension object of view `i`. */
function checkCompressedView(json: any, i: number, buffers: Uint8Array[]): CompressedView | null {
  const v = json.bufferViews[i];
  const m = meshoptExtensionOf(v);
  if (!m) return null;
  const { name, ext } = m;
  if (!isIndex(ext.buffer) || ext.buffer >= buffers.length) bad(i, name, `buffer ${JSON.stringify(ext.buffer)} does not exist`);
  const offset = ext.byteOffset ?? 0;
  if (!isIndex(offset)) bad(i, name, 'byteOffset is not a non-negative integer');
  if (!isIndex(ext.byteLength) || ext.byteLength < 1) bad(i, name, 'byteLength is not a positive integer');
  if (offset + ext.byteLength > buffers[ext.buffer].byteLength) bad(i, name, `the compressed data overruns buffer ${ext.buffer}`);
  if (!isIndex(ext.count) || ext.count < 1) bad(i, name, 'count is not a positive integer');
  if (!isIndex(ext.byteStride) || ext.byteStride < 1) bad(i, name, 'byteStride is not a positive integer');
  if (typeof ext.mode !== 'string' || !MODES.has(ext.mode)) bad(i, name, `mode ${JSON.stringify(ext.mode)} is not ATTRIBUTES, TRIANGLES or INDICES`);
  const filter = ext.filter ?? 'NONE';
  if (typeof filter !== 'string' || !FILTERS[name].includes(filter)) bad(i, name, `filter ${JSON.stringify(ext.filter)} is not known`);
  // Source: EXT_meshopt_compression specification (from memory): attribute streams have a
  // stride that is a multiple of 4 up to 256; index streams 2 or 4 bytes; triangles come in threes.
  if (ext.mode === 'ATTRIBUTES' && (ext.byteStride % 4 !== 0 || ext.byteStride > 256)) bad(i, name, `byteStride ${ext.byteStride} is not a multiple of 4 up to 256`);
  if (ext.mode !== 'ATTRIBUTES' && ext.byteStride !== 2 && ext.byteStride !== 4) bad(i, name, `byteStride ${ext.byteStride} must be 2 or 4 for ${ext.mode}`);
  if (ext.mode === 'TRIANGLES' && ext.count % 3 !== 0) bad(i, name, `count ${ext.count} is not a multiple of 3`);
  if (!isIndex(v.buffer) || v.buffer >= buffers.length) bad(i, name, `the view names buffer ${JSON.stringify(v.buffer)}, which does not exist`);
  const targetOffset = v.byteOffset ?? 0;
  if (!isIndex(targetOffset) || !isIndex(v.byteLength) || targetOffset + v.byteLength > buffers[v.buffer].byteLength) {
    bad(i, name, `the view does not fit in buffer ${v.buffer}`);
  }
  if (ext.count * ext.byteStride > v.byteLength) bad(i, name, `${ext.count} x ${ext.byteStride} decoded bytes do not fit the view's ${v.byteLength}`);
  return {
    view: i,
    name,
    source: buffers[ext.buffer].subarray(offset, offset + ext.byteLength),
    target: v.buffer,
    targetOffset,
    byteLength: v.byteLength,
    byteStride: ext.byteStride,
    count: ext.count,
    mode: ext.mode,
    filter,
  };
}

/** A compressed view as the input stored it (the Asset's record of it). */
export type MeshoptView = MeshoptViewRecord;

/** Result of decodeMeshoptViews. */
export interface MeshoptResult {
  /** The buffers with every compressed view's destination filled with its decoded bytes. */
  buffers: Uint8Array[];
  /** Names of the meshopt extensions that were decoded (in a fixed order). */
  decoded: string[];
  /** Every compressed view, in view order. */
  views: MeshoptView[];
}

/**
 * Decodes every meshopt-compressed buffer view of `json` into its destination range (the
 * view's own buffer, byteOffset and byteLength). Destination buffers are copied first, so the
 * input bytes are never modified; sources are read from the original buffers. A view that is
 * not compressed but reads a fallback buffer without data is refused. Charges the budget for
 * the copies. Throws 'bad-gltf' for malformed extension objects or undecodable streams.
 * Preconditions: `buffers[i]` holds buffer i (zero-filled for fallback buffers without data).
 */
export async function decodeMeshoptViews(json: any, buffers: Uint8Array[], emptyFallbacks: Set<number>, budget: DecodeBudget): Promise<MeshoptResult> {
  const views: any[] = Array.isArray(json.bufferViews) ? json.bufferViews : [];
  const work: CompressedView[] = [];
  for (let i = 0; i < views.length; i++) {
    if (!isObject(views[i])) continue;
    const c = checkCompressedView(json, i, buffers);
    if (c) work.push(c);
    else if (emptyFallbacks.has(views[i].buffer)) {
      throw new TanframeError('bad-gltf', `bufferView ${i} reads fallback buffer ${views[i].buffer}, which has no data, without meshopt compression`);
    }
  }
  if (work.length === 0) return { buffers, decoded: [], views: [] };
  const decode = await loadDecoder();
  const out = buffers.slice();
  const copied = new Set<number>();
  for (const c of work) {
    if (!copied.has(c.target)) {
      copied.add(c.target);
      if (!emptyFallbacks.has(c.target)) {
        chargeBudget(budget, out[c.target].byteLength, `buffer ${c.target}`);
        out[c.target] = out[c.target].slice();
      }
    }
    const target = out[c.target].subarray(c.targetOffset, c.targetOffset + c.count * c.byteStride);
    try {
      await decode(target, c.count, c.byteStride, c.source, c.mode, c.filter);
    } catch (err) {
      throw new TanframeError('bad-gltf', `bufferView ${c.view} ${c.name}: the compressed data does not decode (${String((err as Error)?.message ?? err).split('\n')[0]})`);
    }
  }
  const names = new Set(work.map((c) => c.name));
  const kept = work.map((c) => ({ view: c.view, name: c.name, source: c.source, byteStride: c.byteStride, count: c.count, mode: c.mode, filter: c.filter }));
  return { buffers: out, decoded: MESHOPT_EXTENSIONS.filter((n) => names.has(n)), views: kept };
}

/** The meshopt encoders the writer uses (synchronous once loaded). */
export interface MeshoptEncoders {
  /** A buffer view's bytes as a meshopt stream of `mode` (bitstream version 0, which both extensions read). */
  encode(bytes: Uint8Array, count: number, byteStride: number, mode: 'ATTRIBUTES' | 'TRIANGLES'): Uint8Array;
  /**
   * Unit vectors (4 floats per element: xyz and a fourth value kept as it is, the tangent's w)
   * through the OCTAHEDRAL filter: `stride` 4 (8-bit) or 8 (16-bit) bytes per element, `bits` of precision.
   */
  octahedral(values: Float32Array, count: number, stride: 4 | 8, bits: number): Uint8Array;
}

let encoderPromise: Promise<MeshoptEncoders> | null = null;

/**
 * Loads the `meshoptimizer` package's encoder (its public `meshoptimizer/encoder` entry:
 * encodeGltfBuffer, which runs encodeVertexBuffer / encodeIndexBuffer, and encodeFilterOct).
 * Source: EXT_meshopt_compression specification (ATTRIBUTES and TRIANGLES streams, OCTAHEDRAL filter).
 */
export function loadMeshoptEncoder(): Promise<MeshoptEncoders> {
  encoderPromise ??= (async () => {
    const { MeshoptEncoder } = await import('meshoptimizer/encoder');
    await MeshoptEncoder.ready;
    return {
      encode: (bytes, count, byteStride, mode) => MeshoptEncoder.encodeGltfBuffer(bytes, count, byteStride, mode, 0),
      octahedral: (values, count, stride, bits) => MeshoptEncoder.encodeFilterOct(values, count, stride, bits),
    };
  })();
  return encoderPromise;
}
