/**
 * Produces compressed glTF geometry for tests with the reference encoders that our decoders'
 * packages bring: the Draco encoder of the `draco3d` package and the meshopt encoder of the
 * `meshoptimizer` package (its public `meshoptimizer/encoder` entry).
 * Source for the layouts: KHR_draco_mesh_compression and EXT_meshopt_compression specifications.
 */
import { createRequire } from 'node:module';

const requireHere = createRequire(import.meta.url);

let dracoEncoder: Promise<any> | null = null;
function dracoEncoderModule(): Promise<any> {
  const draco3d = requireHere('draco3d');
  dracoEncoder ??= draco3d.createEncoderModule({});
  return dracoEncoder!;
}

/** Geometry to compress with Draco: float attributes of one vertex list and a triangle list. */
export interface DracoInput {
  positions: Float32Array;
  normals?: Float32Array;
  uvs?: Float32Array;
  indices: Uint32Array;
  /** Quantization bits for POSITION (omit for lossless floats). */
  positionBits?: number;
  /** Sequential encoding keeps the vertex order; edgebreaker (the default of most exporters) may not. */
  method?: 'sequential' | 'edgebreaker';
}

/** A Draco stream and the unique id of each attribute (the extension's `attributes` map). */
export interface DracoOutput {
  bytes: Uint8Array;
  ids: Record<string, number>;
}

/** Encodes a triangle mesh as a Draco stream. */
export async function dracoEncode(input: DracoInput): Promise<DracoOutput> {
  const m = await dracoEncoderModule();
  const encoder = new m.Encoder();
  const builder = new m.MeshBuilder();
  const mesh = new m.Mesh();
  const vertexCount = input.positions.length / 3;
  builder.AddFacesToMesh(mesh, input.indices.length / 3, input.indices);
  const ids: Record<string, number> = {};
  ids.POSITION = builder.AddFloatAttributeToMesh(mesh, m.POSITION, vertexCount, 3, input.positions);
  if (input.normals) ids.NORMAL = builder.AddFloatAttributeToMesh(mesh, m.NORMAL, vertexCount, 3, input.normals);
  if (input.uvs) ids.TEXCOORD_0 = builder.AddFloatAttributeToMesh(mesh, m.TEX_COORD, vertexCount, 2, input.uvs);
  if (input.positionBits) encoder.SetAttributeQuantization(m.POSITION, input.positionBits);
  encoder.SetEncodingMethod(input.method === 'edgebreaker' ? m.MESH_EDGEBREAKER_ENCODING : m.MESH_SEQUENTIAL_ENCODING);
  const out = new m.DracoInt8Array();
  const length = encoder.EncodeMeshToDracoBuffer(mesh, out);
  if (!(length > 0)) throw new Error('Draco encoding failed');
  const bytes = new Uint8Array(length);
  for (let i = 0; i < length; i++) bytes[i] = out.GetValue(i) & 0xff;
  m.destroy(out);
  m.destroy(mesh);
  m.destroy(builder);
  m.destroy(encoder);
  return { bytes, ids };
}

let meshoptEncoder: Promise<any> | null = null;
function meshoptEncoderModule(): Promise<any> {
  meshoptEncoder ??= (async () => {
    const { MeshoptEncoder } = await import('meshoptimizer/encoder');
    await MeshoptEncoder.ready;
    return MeshoptEncoder;
  })();
  return meshoptEncoder;
}

/** Encodes `count` elements of `byteStride` bytes as a meshopt stream of `mode`. */
export async function meshoptEncode(bytes: Uint8Array, count: number, byteStride: number, mode: 'ATTRIBUTES' | 'TRIANGLES' | 'INDICES'): Promise<Uint8Array> {
  const enc = await meshoptEncoderModule();
  return enc.encodeGltfBuffer(bytes, count, byteStride, mode);
}

/** The JSON and BIN chunk of a GLB. Source: glTF 2.0 specification, 4.4 (12-byte header, chunks of length + type). */
export function parseGlbChunks(glb: Uint8Array): { json: any; bin: Uint8Array } {
  const dv = new DataView(glb.buffer, glb.byteOffset, glb.byteLength);
  const jsonLength = dv.getUint32(12, true);
  const json = JSON.parse(new TextDecoder().decode(glb.subarray(20, 20 + jsonLength)));
  const at = 20 + jsonLength;
  const bin = at + 8 <= glb.byteLength ? glb.subarray(at + 8, at + 8 + dv.getUint32(at, true)) : new Uint8Array(0);
  return { json, bin };
}

/** Options of meshoptCompressGlb. */
export interface MeshoptCompressOptions {
  /** Store float NORMAL accessors through the OCTAHEDRAL filter (8-bit, 4-byte elements; normalized BYTE). */
  octahedralNormals?: boolean;
  ext?: 'EXT_meshopt_compression' | 'KHR_meshopt_compression';
}

/**
 * Compresses a GLB's mesh geometry with the meshoptimizer encoder the way a compressing
 * exporter lays it out: every accessor a primitive reads as a vertex attribute or as
 * triangle-list indices (not sparse) gets its own compressed view (ATTRIBUTES with the
 * element size rounded up to 4 bytes, or TRIANGLES for 16/32-bit indices) whose stream lives
 * in buffer 0 and whose uncompressed home is a fallback buffer 1 without data; the views
 * nothing else reads are dropped, other views (images) stay plain in buffer 0.
 * Source: EXT_meshopt_compression specification (buffer view extension, fallback buffer,
 * OCTAHEDRAL filter: two octahedral components, a third holding the scale, the fourth passed
 * through); glTF 2.0 specification 3.6 (strides, alignment).
 */
export async function meshoptCompressGlb(glb: Uint8Array, options: MeshoptCompressOptions = {}): Promise<{ json: any; bin: Uint8Array }> {
  const enc = await meshoptEncoderModule();
  const ext = options.ext ?? 'EXT_meshopt_compression';
  const { json, bin } = parseGlbChunks(glb);
  const uses = new Map<number, { semantic: string | null; indices: boolean }>();
  for (const mesh of json.meshes ?? []) {
    for (const prim of mesh.primitives) {
      for (const [s, a] of Object.entries(prim.attributes)) uses.set(a as number, { semantic: s, indices: false });
      for (const t of prim.targets ?? []) for (const a of Object.values(t)) uses.set(a as number, { semantic: null, indices: false });
      if (prim.indices !== undefined && (prim.mode ?? 4) === 4) uses.set(prim.indices, { semantic: null, indices: true });
    }
  }
  const SIZE: Record<string, number> = { SCALAR: 1, VEC2: 2, VEC3: 3, VEC4: 4 };
  const BYTES: Record<number, number> = { 5120: 1, 5121: 1, 5122: 2, 5123: 2, 5125: 4, 5126: 4 };
  const out = { data: [] as Uint8Array[], length: 0 };
  const place = (bytes: Uint8Array) => {
    const offset = (out.length + 3) & ~3;
    out.data.push(new Uint8Array(offset - out.length), bytes);
    out.length = offset + bytes.length;
    return offset;
  };
  const compressed = new Map<number, any>();
  let fallback = 0;
  let quantized = false;
  for (const [a, use] of [...uses.entries()].sort((x, y) => x[0] - y[0])) {
    const acc = json.accessors[a];
    if (acc.bufferView === undefined || acc.sparse || !SIZE[acc.type]) continue;
    const v = json.bufferViews[acc.bufferView];
    const elem = SIZE[acc.type] * BYTES[acc.componentType];
    if (use.indices && elem === 1) continue;
    const srcStride = v.byteStride ?? elem;
    const start = (v.byteOffset ?? 0) + (acc.byteOffset ?? 0);
    const stride = use.indices ? elem : (elem + 3) & ~3;
    let data = new Uint8Array(acc.count * stride);
    for (let k = 0; k < acc.count; k++) data.set(bin.subarray(start + k * srcStride, start + k * srcStride + elem), k * stride);
    let filter: string | undefined;
    let outStride = stride;
    if (!use.indices && options.octahedralNormals && use.semantic === 'NORMAL' && acc.componentType === 5126 && acc.type === 'VEC3') {
      const f = new Float32Array(data.buffer.slice(0));
      const four = new Float32Array(acc.count * 4);
      for (let k = 0; k < acc.count; k++) for (let c = 0; c < 3; c++) four[k * 4 + c] = f[k * 3 + c];
      data = enc.encodeFilterOct(four, acc.count, 4, 8);
      outStride = 4;
      filter = 'OCTAHEDRAL';
      acc.componentType = 5120;
      acc.normalized = true;
      // Float bounds do not describe BYTE values (glTF 2.0, accessor.min/max: of the component type).
      delete acc.min;
      delete acc.max;
      quantized = true;
    }
    const mode = use.indices ? 'TRIANGLES' : 'ATTRIBUTES';
    const stream = enc.encodeGltfBuffer(data, acc.count, outStride, mode);
    const e: any = { buffer: 0, byteOffset: place(stream), byteLength: stream.length, byteStride: outStride, count: acc.count, mode };
    if (filter) e.filter = filter;
    const view: any = { buffer: 1, byteOffset: fallback, byteLength: acc.count * outStride };
    if (!use.indices) view.byteStride = outStride;
    view.target = use.indices ? 34963 : 34962;
    view.extensions = { [ext]: e };
    fallback = (fallback + acc.count * outStride + 3) & ~3;
    compressed.set(a, view);
  }
  // Views still read by something else (images, accessors left plain) stay, in order.
  const stillRead = new Set<number>();
  json.accessors.forEach((acc: any, a: number) => { if (!compressed.has(a) && acc.bufferView !== undefined) stillRead.add(acc.bufferView); });
  for (const img of json.images ?? []) if (img.bufferView !== undefined) stillRead.add(img.bufferView);
  const renumber = new Map<number, number>();
  const views: any[] = [];
  json.bufferViews.forEach((v: any, i: number) => {
    if (!stillRead.has(i)) return;
    renumber.set(i, views.length);
    const bytes = bin.subarray(v.byteOffset ?? 0, (v.byteOffset ?? 0) + v.byteLength);
    views.push({ ...v, byteOffset: place(bytes) });
  });
  json.accessors.forEach((acc: any, a: number) => {
    const c = compressed.get(a);
    if (c) {
      acc.bufferView = views.length;
      delete acc.byteOffset;
      views.push(c);
    } else if (acc.bufferView !== undefined) acc.bufferView = renumber.get(acc.bufferView);
  });
  for (const img of json.images ?? []) if (img.bufferView !== undefined) img.bufferView = renumber.get(img.bufferView);
  json.bufferViews = views;
  const total = (out.length + 3) & ~3;
  const packed = new Uint8Array(total);
  let at = 0;
  for (const d of out.data) {
    packed.set(d, at);
    at += d.length;
  }
  json.buffers = [{ byteLength: total }, { byteLength: fallback, extensions: { [ext]: { fallback: true } } }];
  const required = new Set<string>([...(json.extensionsRequired ?? []), ext, ...(quantized ? ['KHR_mesh_quantization'] : [])]);
  json.extensionsRequired = [...required];
  json.extensionsUsed = [...new Set([...(json.extensionsUsed ?? []), ...required])];
  return { json, bin: packed };
}
