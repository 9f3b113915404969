/**
 * Decoding and encoding of Draco-compressed mesh primitives (KHR_draco_mesh_compression).
 * Based on: KHR_draco_mesh_compression extension specification (the primitive extension
 * object names a bufferView holding the Draco stream and maps each attribute semantic to a
 * Draco attribute unique id; the accessors describe the decoded data; the stream's faces are
 * the primitive's triangles). Decoding uses the WebAssembly decoder of the `draco3d` package
 * (Draco's own JavaScript build), read from node_modules and loaded only when a file holds
 * Draco data; nothing is fetched from a network at run time. Each attribute is read with
 * `GetAttributeDataArrayForAllPoints` in the component type the stream stores (quantized
 * streams come back dequantized), the faces with `GetTrianglesUInt32Array`. Encoding uses the
 * package's encoder module (MeshBuilder and ExpertEncoder: per-attribute quantization bits).
 */
import { TanframeError } from '../mesh/errors.js';

/** The counts a Draco stream's header declares, read before anything is decoded. */
export interface DracoHeader {
  /** Bitstream version, major and minor. */
  major: number;
  minor: number;
  /** 0 sequential, 1 edgebreaker. */
  method: number;
  /** Triangles the stream holds. */
  faces: number;
  /**
   * Vertices: for a sequential stream the decoded vertex count itself; for edgebreaker the
   * connectivity's vertices, at most the decoded count (attribute seams add vertices).
   */
  vertices: number;
}

/** Deepest metadata nesting read (Draco metadata nests sub-metadata); deeper is refused. */
const MAX_METADATA_DEPTH = 32;

/** A byte cursor over a Draco stream; running past the end throws 'bad-draco'. */
class DracoReader {
  at = 0;
  constructor(private readonly b: Uint8Array, private readonly where: string) {}
  fail(why: string): never {
    throw new TanframeError('bad-draco', `${this.where}: the KHR_draco_mesh_compression data does not decode (${why})`);
  }
  u8(): number {
    if (this.at >= this.b.length) this.fail('the header is truncated');
    return this.b[this.at++];
  }
  u16(): number {
    return this.u8() | (this.u8() << 8);
  }
  u32(): number {
    return (this.u8() | (this.u8() << 8) | (this.u8() << 16)) + this.u8() * 0x1000000;
  }
  /** Unsigned LEB128 of at most 32 bits (Draco's varint). */
  varint(): number {
    let v = 0;
    for (let shift = 0; shift < 35; shift += 7) {
      const byte = this.u8();
      v += (byte & 0x7f) * 2 ** shift;
      if ((byte & 0x80) === 0) {
        if (v > 0xffffffff) this.fail('a count does not fit 32 bits');
        return v;
      }
    }
    this.fail('a count does not fit 32 bits');
  }
  skip(n: number): void {
    if (this.at + n > this.b.length) this.fail('the header is truncated');
    this.at += n;
  }
}

/** Skips one metadata element (entries, then named sub-metadata, recursively). */
function skipMetadataElement(r: DracoReader, depth: number): void {
  if (depth > MAX_METADATA_DEPTH) r.fail(`metadata nests deeper than ${MAX_METADATA_DEPTH} levels`);
  const entries = r.varint();
  for (let i = 0; i < entries; i++) {
    r.skip(r.u8());
    r.skip(r.u8());
  }
  const subs = r.varint();
  for (let i = 0; i < subs; i++) {
    r.skip(r.u8());
    skipMetadataElement(r, depth + 1);
  }
}

/**
 * Reads the header of a Draco mesh stream up to its face and vertex counts, without decoding.
 * Based on: the Draco bitstream specification (header: "DRACO", major and minor version,
 * encoder type, encoder method, flags; optional metadata when flags & 0x8000; then the
 * connectivity header: sequential num_faces, num_points; edgebreaker traversal type, before
 * 2.2 num_new_vertices, then num_encoded_vertices, num_faces; counts are varints from 2.2
 * (edgebreaker from 2.0), 32-bit before). Throws 'bad-draco' for anything else (point clouds
 * included: the extension carries meshes).
 */
export function readDracoHeader(stream: Uint8Array, where: string): DracoHeader {
  const r = new DracoReader(stream, where);
  const magic = 'DRACO';
  for (let i = 0; i < magic.length; i++) if (r.u8() !== magic.charCodeAt(i)) r.fail('no Draco header');
  const major = r.u8();
  const minor = r.u8();
  if (major < 1 || major > 2) r.fail(`bitstream version ${major}.${minor} is not supported`);
  const version = major * 256 + minor;
  const type = r.u8();
  if (type !== 1) r.fail(type === 0 ? 'it is a point cloud, not a mesh' : `unknown encoder type ${type}`);
  const method = r.u8();
  if (method !== 0 && method !== 1) r.fail(`unknown encoder method ${method}`);
  const flags = r.u16();
  if (flags & 0x8000) {
    const attributeMetadata = r.varint();
    for (let i = 0; i < attributeMetadata; i++) {
      r.varint();
      skipMetadataElement(r, 1);
    }
    skipMetadataElement(r, 1);
  }
  const v22 = version >= 2 * 256 + 2;
  if (method === 0) {
    const faces = v22 ? r.varint() : r.u32();
    const vertices = v22 ? r.varint() : r.u32();
    return { major, minor, method, faces, vertices };
  }
  r.u8(); // traversal decoder type
  if (!v22) r.u32(); // num_new_vertices
  const v20 = version >= 2 * 256;
  const vertices = v20 ? r.varint() : r.u32();
  const faces = v20 ? r.varint() : r.u32();
  return { major, minor, method, faces, vertices };
}

/** One decoded Draco attribute: values as the decoder returns them. */
export interface DracoAttribute {
  array: Int8Array | Uint8Array | Int16Array | Uint16Array | Int32Array | Uint32Array | Float32Array;
  itemSize: number;
}

/** A decoded Draco primitive. */
export interface DracoMesh {
  /** By glTF semantic, for each semantic of the extension's attribute map found in the stream. */
  attributes: Record<string, DracoAttribute>;
  /** Triangle list. */
  indices: Uint32Array;
  /** Number of decoded vertices. */
  vertexCount: number;
}

/** The decoder module: the part of draco3d's Emscripten interface used here. */
type DracoDecoderModule = any;

let modulePromise: Promise<DracoDecoderModule> | null = null;

/** Loads draco3d's decoder module on first use. */
function loadModule(): Promise<DracoDecoderModule> {
  modulePromise ??= (async () => {
    const mod: any = await import('draco3d');
    const draco3d = mod.default ?? mod;
    return await draco3d.createDecoderModule({});
  })();
  return modulePromise;
}

/** Typed array and decoder data type for a Draco attribute data type (draco DataType enum). */
function arrayKind(draco: DracoDecoderModule, dataType: number): { ctor: any; dt: number } | null {
  switch (dataType) {
    case draco.DT_INT8: return { ctor: Int8Array, dt: draco.DT_INT8 };
    case draco.DT_UINT8: return { ctor: Uint8Array, dt: draco.DT_UINT8 };
    case draco.DT_INT16: return { ctor: Int16Array, dt: draco.DT_INT16 };
    case draco.DT_UINT16: return { ctor: Uint16Array, dt: draco.DT_UINT16 };
    case draco.DT_INT32: return { ctor: Int32Array, dt: draco.DT_INT32 };
    case draco.DT_UINT32: return { ctor: Uint32Array, dt: draco.DT_UINT32 };
    case draco.DT_FLOAT32: return { ctor: Float32Array, dt: draco.DT_FLOAT32 };
    default: return null;
  }
}

/** Decodes the stream into a draco Mesh or PointCloud; throws a plain Error when it does not decode. */
function decodeGeometry(draco: DracoDecoderModule, decoder: any, buffer: any): any {
  const type = decoder.GetEncodedGeometryType(buffer);
  let geometry: any;
  let status: any;
  if (type === draco.TRIANGULAR_MESH) {
    geometry = new draco.Mesh();
    status = decoder.DecodeBufferToMesh(buffer, geometry);
  } else if (type === draco.POINT_CLOUD) {
    geometry = new draco.PointCloud();
    status = decoder.DecodeBufferToPointCloud(buffer, geometry);
  } else {
    throw new Error('the stream is neither a triangle mesh nor a point cloud');
  }
  if (!status.ok() || !geometry.ptr) {
    const why = status.error_msg();
    draco.destroy(geometry);
    throw new Error(`decoding failed: ${why}`);
  }
  return geometry;
}

/**
 * Decodes `stream` and hands the decoder's geometry to `read`, destroying the decoder's
 * objects afterwards whatever happens. `skipTransforms` leaves the attribute transforms in
 * place (the quantization and octahedron transforms then report their bits). Throws
 * 'bad-draco' when the stream does not decode.
 */
async function withDecodedGeometry<T>(stream: Uint8Array, where: string, skipTransforms: boolean, read: (draco: any, decoder: any, geometry: any) => T): Promise<T> {
  const draco = await loadModule();
  const decoder = new draco.Decoder();
  const buffer = new draco.DecoderBuffer();
  let geometry: any = null;
  try {
    buffer.Init(new Int8Array(stream.buffer, stream.byteOffset, stream.byteLength), stream.byteLength);
    if (skipTransforms) for (const t of [draco.POSITION, draco.NORMAL, draco.COLOR, draco.TEX_COORD, draco.GENERIC]) decoder.SkipAttributeTransform(t);
    try {
      geometry = decodeGeometry(draco, decoder, buffer);
    } catch {
      // The decoder's own message is not quoted: it may carry bytes of the stream.
      throw new TanframeError('bad-draco', `${where}: the KHR_draco_mesh_compression data does not decode`);
    }
    return read(draco, decoder, geometry);
  } finally {
    if (geometry) draco.destroy(geometry);
    draco.destroy(buffer);
    draco.destroy(decoder);
  }
}

/**
 * Decodes one Draco stream. `attributeIds` is the extension's map semantic -> Draco unique id.
 * Returns the attributes found (values as decoded: quantized streams come back dequantized),
 * the triangle list and the vertex count. Throws 'bad-draco' when the stream does not decode
 * or names an attribute id it lacks. Callers check readDracoHeader's counts first: the
 * decoder allocates what the header declares.
 */
export async function decodeDracoPrimitive(stream: Uint8Array, attributeIds: Record<string, number>, where: string): Promise<DracoMesh> {
  return withDecodedGeometry(stream, where, false, (draco, decoder, geometry) => {
    const vertexCount: number = geometry.num_points();
    const attributes: Record<string, DracoAttribute> = {};
    for (const semantic of Object.keys(attributeIds)) {
      const id = attributeIds[semantic];
      const attribute = Number.isInteger(id) && id >= 0 ? decoder.GetAttributeByUniqueId(geometry, id) : null;
      const kind = attribute && attribute.ptr ? arrayKind(draco, attribute.data_type()) : null;
      if (!kind) {
        throw new TanframeError('bad-draco', `${where}: KHR_draco_mesh_compression attribute ${semantic} (id ${id}) is not in the Draco data`);
      }
      const itemSize: number = attribute.num_components();
      const values = vertexCount * itemSize;
      const byteLength = values * kind.ctor.BYTES_PER_ELEMENT;
      const ptr = draco._malloc(byteLength);
      try {
        decoder.GetAttributeDataArrayForAllPoints(geometry, attribute, kind.dt, byteLength, ptr);
        attributes[semantic] = { array: new kind.ctor(draco.HEAPF32.buffer, ptr, values).slice(), itemSize };
      } finally {
        draco._free(ptr);
      }
    }
    let indices = new Uint32Array(0);
    if (geometry instanceof draco.Mesh) {
      const count = geometry.num_faces() * 3;
      const ptr = draco._malloc(count * 4);
      try {
        decoder.GetTrianglesUInt32Array(geometry, count * 4, ptr);
        indices = new Uint32Array(draco.HEAPF32.buffer, ptr, count).slice();
      } finally {
        draco._free(ptr);
      }
    }
    return { attributes, indices, vertexCount };
  });
}

/** How the input's Draco stream stored one attribute: quantization bits, or null for values stored as they are. */
export interface DracoAttributeSetting {
  /** Quantization bits (octahedral bits for normals), or null when the attribute is not quantized. */
  bits: number | null;
}

/** What a Draco stream records of its encoding: method and, per glTF semantic, quantization. */
export interface DracoStreamSettings {
  /** 0 sequential, 1 edgebreaker. */
  method: number;
  attributes: Record<string, DracoAttributeSetting>;
}

/**
 * Reads the encoder settings a Draco stream records: its method (header) and, for each
 * semantic of `attributeIds`, the quantization bits of its attribute. The stream is decoded
 * once more with the attribute transforms left in place (the decoder's SkipAttributeTransform),
 * so the quantization and octahedron transforms report their bits (Draco's
 * AttributeQuantizationTransform / AttributeOctahedronTransform InitFromAttribute). Throws
 * 'bad-draco' when the stream does not decode (callers read it with decodeDracoPrimitive first).
 */
export async function readDracoSettings(stream: Uint8Array, attributeIds: Record<string, number>, where: string): Promise<DracoStreamSettings> {
  const header = readDracoHeader(stream, where);
  return withDecodedGeometry(stream, where, true, (draco, decoder, geometry) => {
    const attributes: Record<string, DracoAttributeSetting> = {};
    for (const semantic of Object.keys(attributeIds).sort()) {
      const attribute = decoder.GetAttributeByUniqueId(geometry, attributeIds[semantic]);
      if (!attribute || !attribute.ptr) continue;
      const q = new draco.AttributeQuantizationTransform();
      const o = new draco.AttributeOctahedronTransform();
      try {
        if (q.InitFromAttribute(attribute)) attributes[semantic] = { bits: q.quantization_bits() };
        else if (o.InitFromAttribute(attribute)) attributes[semantic] = { bits: o.quantization_bits() };
        else attributes[semantic] = { bits: null };
      } finally {
        draco.destroy(q);
        draco.destroy(o);
      }
    }
    return { method: header.method, attributes };
  });
}

/** One attribute to store in a Draco stream. */
export interface DracoEncodeAttribute {
  semantic: string;
  /** Values, element-major; float attributes may be quantized, integer ones are stored as they are. */
  array: Float32Array | Int8Array | Uint8Array | Int16Array | Uint16Array | Uint32Array;
  itemSize: number;
  /** Quantization bits for a float attribute, or null to store its floats as they are. */
  bits: number | null;
}

/** A mesh to store in a Draco stream. */
export interface DracoEncodeInput {
  attributes: DracoEncodeAttribute[];
  /** Triangle list. */
  indices: Uint32Array;
  vertexCount: number;
  /** 0 sequential (keeps the vertex order), 1 edgebreaker. */
  method: number;
}

/** A Draco stream and, by semantic, the unique id of each attribute (the extension's `attributes` map). */
export interface DracoEncoded {
  bytes: Uint8Array;
  ids: Record<string, number>;
}

/** Encodes a triangle mesh as a Draco stream (synchronous once the encoder is loaded). */
export type DracoEncodeFn = (input: DracoEncodeInput) => DracoEncoded;

let encoderPromise: Promise<any> | null = null;

/** Draco attribute type for a glTF semantic. Source: KHR_draco_mesh_compression (attributes by semantic); TANGENT and others GENERIC. */
function dracoAttributeType(m: any, semantic: string): number {
  if (semantic === 'POSITION') return m.POSITION;
  if (semantic === 'NORMAL') return m.NORMAL;
  if (semantic.startsWith('TEXCOORD_')) return m.TEX_COORD;
  if (semantic.startsWith('COLOR_')) return m.COLOR;
  return m.GENERIC;
}

/**
 * Loads the `draco3d` package's encoder module (its public entry, createEncoderModule) and
 * returns a synchronous encoder. Speed options 5/5 are Draco's defaults (from memory); the
 * encoder is deterministic for the same input.
 */
export async function loadDracoEncoder(): Promise<DracoEncodeFn> {
  encoderPromise ??= (async () => {
    const mod: any = await import('draco3d');
    const draco3d = mod.default ?? mod;
    return await draco3d.createEncoderModule({});
  })();
  const m = await encoderPromise;
  return (input) => {
    const builder = new m.MeshBuilder();
    const mesh = new m.Mesh();
    let encoder: any = null;
    const out = new m.DracoInt8Array();
    try {
      builder.AddFacesToMesh(mesh, input.indices.length / 3, input.indices);
      const ids: Record<string, number> = {};
      const bits: [number, number][] = [];
      for (const a of input.attributes) {
        const type = dracoAttributeType(m, a.semantic);
        const n = input.vertexCount;
        const arr = a.array;
        let id: number;
        if (arr instanceof Float32Array) id = builder.AddFloatAttribute(mesh, type, n, a.itemSize, arr);
        else if (arr instanceof Int8Array) id = builder.AddInt8Attribute(mesh, type, n, a.itemSize, arr);
        else if (arr instanceof Uint8Array) id = builder.AddUInt8Attribute(mesh, type, n, a.itemSize, arr);
        else if (arr instanceof Int16Array) id = builder.AddInt16Attribute(mesh, type, n, a.itemSize, arr);
        else if (arr instanceof Uint16Array) id = builder.AddUInt16Attribute(mesh, type, n, a.itemSize, arr);
        else id = builder.AddUInt32Attribute(mesh, type, n, a.itemSize, arr);
        if (id < 0) throw new TanframeError('internal', `Draco encoder refused attribute ${a.semantic}`);
        ids[a.semantic] = id;
        if (arr instanceof Float32Array && a.bits !== null) bits.push([id, a.bits]);
      }
      encoder = new m.ExpertEncoder(mesh);
      for (const [id, b] of bits) encoder.SetAttributeQuantization(id, b);
      encoder.SetSpeedOptions(5, 5);
      encoder.SetEncodingMethod(input.method === 0 ? m.MESH_SEQUENTIAL_ENCODING : m.MESH_EDGEBREAKER_ENCODING);
      const length = encoder.EncodeToDracoBuffer(false, out);
      if (!(length > 0)) throw new TanframeError('internal', 'the Draco encoder produced no data');
      const bytes = new Uint8Array(length);
      for (let i = 0; i < length; i++) bytes[i] = out.GetValue(i) & 0xff;
      return { bytes, ids };
    } finally {
      m.destroy(out);
      if (encoder) m.destroy(encoder);
      m.destroy(mesh);
      m.destroy(builder);
    }
  };
}
