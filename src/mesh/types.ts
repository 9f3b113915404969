/**
 * The in-memory mesh shared by every stage: structure-of-arrays typed arrays.
 * Positions, normals and uvs are float32, three / three / two per vertex; indices
 * are a triangle list (three per triangle) over those vertices.
 */

/** Tangent-frame methods. Both are published methods and keep their usual names. */
export type FrameMethod = 'mikktspace' | 'lengyel';

/** How `lengyel` sums per-triangle tangents at a vertex. */
export type TangentWeight = 'derivative' | 'angle' | 'area' | 'uniform';

/**
 * Where texture-coordinate v = 0 lies. `top-left` is glTF (v grows downward in the
 * image); `bottom-left` is OBJ / OpenGL (v grows upward).
 */
export type UvOrigin = 'top-left' | 'bottom-left';

/** Geometry a frame solve reads. */
export interface FrameInput {
  /** xyz per vertex. */
  positions: Float32Array;
  /** unit xyz per vertex. */
  normals: Float32Array;
  /** uv per vertex. */
  uvs: Float32Array;
  /** Triangle list; when absent, vertices 0,1,2 form the first triangle and so on. */
  indices?: Uint32Array | null;
  /**
   * Optional original face per triangle (for example an OBJ quad split in two): exactly two
   * consecutive triangles sharing a face id are a quad, kept to one orientation by
   * `mikktspace`; the triangles of a fanned polygon with more corners (three or more with
   * one id) are solved as independent triangles, as the standard method takes them.
   */
  faces?: Uint32Array | null;
}

/** Options of a frame solve. */
export interface FrameOptions {
  method?: FrameMethod;
  uvOrigin?: UvOrigin;
  weight?: TangentWeight;
}

/** Counts the solve collects while it works (degenerate input gets a fallback and a count). */
export interface FrameStats {
  /** Triangles whose UV area is zero or tiny (no tangent direction of their own). */
  degenerateUvTriangles: number;
  /** Triangles whose UV orientation is negative (mirrored), measured with v upward. */
  mirroredTriangles: number;
  /** Output vertices added by splitting (verticesOut - verticesIn). */
  splitVertices: number;
  /** Output vertices whose tangent came from the documented fallback (no usable UV direction). */
  fallbackTangents: number;
}

/** Result of `computeFrames`. */
export interface FrameResult {
  /** Four floats per output vertex: xyz unit, w = +1 or -1. */
  tangents: Float32Array;
  /** Triangle list over output vertices. */
  indices: Uint32Array;
  /** For each output vertex, the input vertex it copies. */
  sourceVertex: Uint32Array;
  /**
   * Per corner of `indices` (3 per triangle): 1 where the method defines no tangent (no
   * contributing triangle reaches the corner's vertex, e.g. every triangle around it is
   * degenerate in UV) and the documented fallback was written, else 0. A file made by another
   * implementation of the method holds that implementation's default there (METHODS.md step 8).
   */
  undefinedCorners: Uint8Array;
  stats: FrameStats;
}
