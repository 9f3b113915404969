/**
 * Decoding of Draco-compressed mesh primitives (KHR_draco_mesh_compression).
 * Based on: KHR_draco_mesh_compression extension specification (the primitive extension
 * object names a bufferView holding the Draco stream and maps each attribute semantic to a
 * Draco attribute unique id; the accessors describe the decoded data; the stream's faces are
 * the primitive's triangles). Decoding uses the WebAssembly decoder of the `draco3d` package
 * (Draco's own JavaScript build), read from node_modules and loaded only when a file holds
 * Draco data; nothing is fetched from a network at run time. Each attribute is read with
 * `GetAttributeDataArrayForAllPoints` in the component type the stream stores (quantized
 * streams come back dequantized), the faces with `GetTrianglesUInt32Array`.
 */
import { TanframeError } from '../mesh/errors.js';

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
 * Decodes one Draco stream. `attributeIds` is the extension's map semantic -> Draco unique id.
 * Returns the attributes found (values as decoded: quantized streams come back dequantized),
 * the triangle list and the vertex count. Throws 'bad-gltf' when the stream does not decode
 * or names an attribute id it lacks.
 */
export async function decodeDracoPrimitive(stream: Uint8Array, attributeIds: Record<string, number>, where: string): Promise<DracoMesh> {
  const draco = await loadModule();
  const decoder = new draco.Decoder();
  const buffer = new draco.DecoderBuffer();
  let geometry: any = null;
  try {
    buffer.Init(new Int8Array(stream.buffer, stream.byteOffset, stream.byteLength), stream.byteLength);
    try {
      geometry = decodeGeometry(draco, decoder, buffer);
    } catch (err) {
      throw new TanframeError('bad-gltf', `${where}: the KHR_draco_mesh_compression data does not decode (${String((err as Error)?.message ?? err).split('\n')[0]})`);
    }
    const vertexCount: number = geometry.num_points();
    const attributes: Record<string, DracoAttribute> = {};
    for (const semantic of Object.keys(attributeIds)) {
      const id = attributeIds[semantic];
      const attribute = Number.isInteger(id) && id >= 0 ? decoder.GetAttributeByUniqueId(geometry, id) : null;
      const kind = attribute && attribute.ptr ? arrayKind(draco, attribute.data_type()) : null;
      if (!kind) {
        throw new TanframeError('bad-gltf', `${where}: KHR_draco_mesh_compression attribute ${semantic} (id ${id}) is not in the Draco data`);
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
  } finally {
    if (geometry) draco.destroy(geometry);
    draco.destroy(buffer);
    draco.destroy(decoder);
  }
}
