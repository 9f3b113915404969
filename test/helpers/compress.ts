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
