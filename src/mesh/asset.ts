/**
 * The decoded asset that `io` reads and writes and the library bakes: the glTF JSON as
 * read (synthesized for OBJ), every buffer resolved to bytes, and each mesh primitive's
 * attributes decoded once into tightly packed typed arrays of their stored component type.
 */

/** Typed arrays a glTF accessor can decode to (glTF 2.0 component types). */
export type ComponentArray = Int8Array | Uint8Array | Int16Array | Uint16Array | Uint32Array | Float32Array;

/** glTF 2.0 component type enums. */
export const BYTE = 5120;
export const UNSIGNED_BYTE = 5121;
export const SHORT = 5122;
export const UNSIGNED_SHORT = 5123;
export const UNSIGNED_INT = 5125;
export const FLOAT = 5126;

/** glTF 2.0 primitive modes. */
export const MODE_POINTS = 0;
export const MODE_LINES = 1;
export const MODE_LINE_LOOP = 2;
export const MODE_LINE_STRIP = 3;
export const MODE_TRIANGLES = 4;
export const MODE_TRIANGLE_STRIP = 5;
export const MODE_TRIANGLE_FAN = 6;

/** One attribute (or morph-target attribute), decoded: dense, tightly packed, stored component type kept. */
export interface AttributeData {
  /** itemSize values per element, element-major. */
  array: ComponentArray;
  /** Components per element: 1 (SCALAR) .. 16 (MAT4). */
  itemSize: number;
  /** glTF accessor `type`: 'SCALAR' | 'VEC2' | 'VEC3' | 'VEC4' | 'MAT2' | 'MAT3' | 'MAT4'. */
  type: string;
  /** glTF component type enum (5120..5126). */
  componentType: number;
  /** Integer values stand for [0,1] or [-1,1] (accessor.normalized). */
  normalized: boolean;
}

/** One mesh primitive as decoded. */
export interface PrimitiveData {
  /** Index of the mesh in json.meshes. */
  mesh: number;
  /** Index of the primitive in that mesh's primitives. */
  primitive: number;
  meshName: string | null;
  /** json.meshes[mesh].primitives[primitive].material, or null. */
  material: number | null;
  /** glTF mode (default 4). */
  mode: number;
  /** Attributes by glTF semantic (POSITION, NORMAL, TANGENT, TEXCOORD_0, COLOR_0, JOINTS_0, ...). */
  attributes: Record<string, AttributeData>;
  /** Indices as stored for `mode` (not expanded), widened to Uint32; null when non-indexed. */
  indices: Uint32Array | null;
  /** Morph targets, each by semantic (deltas). */
  targets: Record<string, AttributeData>[];
  /** Original face id per triangle (OBJ quads / polygons split in two or more); null for glTF. */
  faces: Uint32Array | null;
}

/** An external resource (image) a .gltf or .mtl names, resolved inside the input's folder. */
export interface ExternalImage {
  /** Index in json.images. */
  image: number;
  /** URI as written in the file (kept verbatim on output). */
  uri: string;
  /** Absolute path it resolved to. */
  path: string;
  /** The bytes, or null when the file is missing (a warning, not a failure). */
  bytes: Uint8Array | null;
}

/** A whole decoded asset. */
export interface Asset {
  /** Path of the file read. */
  sourcePath: string;
  container: 'glb' | 'gltf' | 'obj';
  /** The glTF JSON (for OBJ, synthesized: one node, one mesh, materials from the MTL). */
  json: any;
  /** Bytes of json.buffers[i]; for GLB, buffers[0] without uri is the BIN chunk. */
  buffers: Uint8Array[];
  /** Images named by URI (embedded images live in bufferViews or data: URIs and need nothing here). */
  externalImages: ExternalImage[];
  /** OBJ: absolute paths of the material libraries (.mtl) the file names, found or not. */
  materialLibraries?: string[];
  /** Every mesh primitive in json order (mesh by mesh, primitive by primitive). */
  primitives: PrimitiveData[];
  /** Non-fatal findings worth telling the user (missing image, ...), one line each. */
  warnings: string[];
  /**
   * Geometry-compression extensions the reader decoded (KHR_draco_mesh_compression,
   * EXT_meshopt_compression, KHR_meshopt_compression); absent or empty when none.
   */
  decompressed?: string[];
  /** The meshopt-compressed buffer views as the input stored them (see MeshoptViewRecord); absent or empty when none. */
  meshoptViews?: MeshoptViewRecord[];
}

/** A meshopt-compressed buffer view as read: enough to write it again byte for byte. */
export interface MeshoptViewRecord {
  /** Index of the buffer view. */
  view: number;
  /** Extension name (EXT_meshopt_compression or KHR_meshopt_compression). */
  name: string;
  /** The compressed stream (a view of the input's buffer). */
  source: Uint8Array;
  byteStride: number;
  count: number;
  /** ATTRIBUTES, TRIANGLES or INDICES. */
  mode: string;
  /** NONE, OCTAHEDRAL, QUATERNION, EXPONENTIAL or COLOR. */
  filter: string;
}

/** New geometry for one baked primitive: the writer stores it in place of the original. */
export interface PrimitiveReplacement {
  /** Full attribute set by semantic, TANGENT included. */
  attributes: Record<string, AttributeData>;
  /** Triangle list. */
  indices: Uint32Array;
  /** Morph targets (same order as the original), by semantic. */
  targets: Record<string, AttributeData>[];
}
