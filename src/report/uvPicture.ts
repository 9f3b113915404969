/**
 * Based on: the report schema in DESIGN.md (triangle indices are positions in the expanded
 * triangle list). The data a UV picture is drawn from: kept apart from the JSON report, made
 * only when pictures are asked for (--uv-maps, --html).
 */

/** Flag bit of a drawn triangle: its UVs have no usable area (findDegenerateUvTriangles). */
export const PICTURE_DEGENERATE_UV = 1;
/** Flag bit of a drawn triangle: negative UV orientation (markMirroredTriangles). */
export const PICTURE_MIRRORED = 2;
/** Flag bit of a drawn triangle: it overlaps another triangle in UV space (findUvOverlaps). */
export const PICTURE_OVERLAP = 4;

/**
 * Most triangles one picture draws. Beyond it the flagged triangles are drawn first and the
 * rest is an even sample, so a picture stays a few MiB whatever the mesh (about 25 bytes per
 * drawn triangle in memory, 40 to 60 bytes of SVG text). A choice of ours, no source.
 */
export const MAX_PICTURE_TRIANGLES = 200_000;

/** The material's normal map, shrunk, drawn faintly behind a UV picture's layout. */
export interface PictureBackground {
  /** PNG bytes (8-bit RGB) of the shrunk map. */
  png: Uint8Array;
  width: number;
  height: number;
  /** How the map repeats beyond texture coordinates 0..1 (the sampler's wrapS, wrapT). */
  wrapS: 'repeat' | 'mirror' | 'clamp';
  wrapT: 'repeat' | 'mirror' | 'clamp';
  /**
   * The map's KHR_texture_transform as a column-major 3 x 3 matrix from UV to texture
   * coordinates (uvTransformMatrix), or null when it has none.
   */
  transform: number[] | null;
}

/** One primitive's UV picture data. Counts are over all its triangles, drawn or not. */
export interface UvPicture {
  /** The file as the report names it. */
  input: string;
  mesh: number;
  meshName: string | null;
  primitive: number;
  uvSet: number;
  /** Triangles in the primitive. */
  triangles: number;
  /** u0 v0 u1 v1 u2 v2 per drawn triangle (glTF convention: v grows downward). */
  uvs: Float32Array;
  /** PICTURE_* bits per drawn triangle. */
  flags: Uint8Array;
  /** Triangle index (in the primitive's triangle list) of each drawn triangle, ascending within each pass. */
  index: Uint32Array;
  degenerateUv: number;
  mirrored: number;
  overlap: number;
  /** Triangles with a NaN or infinite UV (they cannot be drawn). */
  nonFinite: number;
  /** The normal map drawn behind the layout; absent or null when there is none to draw. */
  background?: PictureBackground | null;
  /** Why the material's normal map is not drawn (one line), or absent / null. */
  backgroundNote?: string | null;
}

/** The ArrayBuffers of `pictures`, for a transfer list between threads. */
export function pictureBuffers(pictures: UvPicture[]): ArrayBuffer[] {
  const out: ArrayBuffer[] = [];
  for (const p of pictures) {
    out.push(p.uvs.buffer as ArrayBuffer, p.flags.buffer as ArrayBuffer, p.index.buffer as ArrayBuffer);
    if (p.background) out.push(p.background.png.buffer as ArrayBuffer);
  }
  return out;
}
