/**
 * Every numeric tolerance of tanframe, in one place. Each says what it measures and
 * where the value comes from.
 */

/**
 * Degenerate-UV test: a triangle is degenerate when |det| <= UV_DEGENERATE_RELATIVE *
 * (|e1_uv|^2 + |e2_uv|^2), det being twice its signed UV area. This is the sine of the
 * smallest UV corner angle scale: 1e-7 flags collinear / coincident UVs while keeping thin
 * slivers that still have a direction. Common practice, no single source.
 */
export const UV_DEGENERATE_RELATIVE = 1e-7;

/**
 * The standard method's own zero test for areas and lengths: |x| > FLT_MIN counts as
 * non-zero (the reference implementation's `NotZero`; from memory of that code).
 */
export const MIKK_NOT_ZERO = 1.1754943508222875e-38;

/**
 * An edge projected on a vertex's tangent plane counts as zero when its squared length is at
 * most this fraction of the edge's own (the edge lies along the normal, up to float64
 * rounding of |a|^2 - (n.a)^2). Common practice.
 */
export const PROJECTED_ZERO = 1e-12;

/**
 * Geometry-degenerate test: a triangle whose |cross(e1,e2)| <= GEOMETRY_DEGENERATE_RELATIVE *
 * (|e1|^2 + |e2|^2) has no usable area (collinear or coincident corners). 1e-7 is about
 * float32 rounding, so points colinear before rounding to float32 are still caught. Common
 * practice, no single source.
 */
export const GEOMETRY_DEGENERATE_RELATIVE = 1e-7;

/**
 * Unit-length tolerance for stored NORMAL and TANGENT xyz: | |v| - 1 | beyond this is
 * non-unit. The glTF validator's own threshold is 0.00005 on the length (from memory);
 * we allow a little more for quantized input. Common practice.
 */
export const UNIT_LENGTH_TOLERANCE = 5e-4;

/** Below this length a vector counts as zero and is not normalised (float32 scale). */
export const ZERO_LENGTH = 1e-20;

/**
 * A stored tangent counts as orthogonal to its normal when |dot(n, t)| <= this (cosine),
 * about 0.6 degrees off 90. Common practice.
 */
export const ORTHOGONAL_COSINE_TOLERANCE = 1e-2;

/**
 * Largest rounding error of one component of a unit vector stored as a normalized signed
 * integer, decoded as c / (2^(n-1) - 1) (glTF 2.0 specification, 3.11 "Animations" /
 * normalized integers, and KHR_mesh_quantization, which allows NORMAL and TANGENT as
 * normalized BYTE or SHORT): half a step, 0.5 / 127 for BYTE and 0.5 / 32767 for SHORT.
 */
export const NORMALIZED_BYTE_HALF_STEP = 0.5 / 127;
export const NORMALIZED_SHORT_HALF_STEP = 0.5 / 32767;

/**
 * How far a stored unit vector's decoded value may be from a unit vector through its
 * encoding alone: the vector error of three components each off by at most the half step,
 * sqrt(3) * half step (a bound: Avocado glTF-Quantized measures 6.0e-3 of the BYTE bound
 * 6.8e-3). 0 for float.
 */
export function encodingError(componentType: number, normalized: boolean): number {
  if (!normalized) return 0;
  if (componentType === 5120) return Math.sqrt(3) * NORMALIZED_BYTE_HALF_STEP; // BYTE
  if (componentType === 5122) return Math.sqrt(3) * NORMALIZED_SHORT_HALF_STEP; // SHORT
  return 0;
}

/**
 * Half the step of one component as stored, in the decoded units tanframe computes in: 0 for
 * float; 0.5 for integers that are not normalized (KHR_mesh_quantization POSITION and
 * TEXCOORD, scaled by a node or texture transform); 0.5 / (2^(n-1) - 1) or 0.5 / (2^n - 1)
 * for normalized signed or unsigned integers (glTF 2.0 specification 3.11).
 */
export function componentHalfStep(componentType: number, normalized: boolean): number {
  let steps = 0;
  switch (componentType) {
    case 5120: steps = 127; break; // BYTE
    case 5121: steps = 255; break; // UNSIGNED_BYTE
    case 5122: steps = 32767; break; // SHORT
    case 5123: steps = 65535; break; // UNSIGNED_SHORT
    default: return 0; // FLOAT (and UNSIGNED_INT, which attributes do not use)
  }
  return normalized ? 0.5 / steps : 0.5;
}

/**
 * UV-overlap test, absolute part, for a TEXCOORD stored with this component type: two
 * triangles that only touched before rounding can penetrate by the displacement of a point
 * (up to sqrt(2) half steps) plus that of an edge (as much again) after it, so the touching
 * tolerance is UV_OVERLAP_ABSOLUTE plus 2 * sqrt(2) half steps, in the stored units. Float
 * keeps UV_OVERLAP_ABSOLUTE.
 */
export function uvOverlapAbsolute(componentType: number, normalized: boolean): number {
  return UV_OVERLAP_ABSOLUTE + 2 * Math.SQRT2 * componentHalfStep(componentType, normalized);
}

/**
 * Unit-length tolerance for a NORMAL or TANGENT stored with this component type:
 * UNIT_LENGTH_TOLERANCE plus the encoding's own error (encodingError), so a normalized BYTE
 * vector rounded correctly from a unit vector is unit (about 7.3e-3), SHORT about 5.3e-4,
 * float 5e-4.
 */
export function unitLengthTolerance(componentType: number, normalized: boolean): number {
  return UNIT_LENGTH_TOLERANCE + encodingError(componentType, normalized);
}

/**
 * How a stored tangent is judged valid (isStoredTangentValid in src/diagnose/storedTangents.ts):
 * | |xyz| - 1 | <= unitLength and |cos(xyz, normal)| <= orthogonalCosine.
 */
export interface TangentValidityTolerances {
  unitLength: number;
  orthogonalCosine: number;
}

/** Validity tolerances for float NORMAL and TANGENT. */
export const FLOAT_TANGENT_VALIDITY: TangentValidityTolerances = {
  unitLength: UNIT_LENGTH_TOLERANCE,
  orthogonalCosine: ORTHOGONAL_COSINE_TOLERANCE,
};

/**
 * Validity tolerances for a TANGENT and NORMAL stored with these encodings: the unit-length
 * tolerance of the tangent's encoding, and an orthogonality tolerance widened by both
 * vectors' encoding errors (rounding each moves their dot product by at most that much).
 */
export function tangentValidityTolerances(
  tangent: { componentType: number; normalized: boolean },
  normal: { componentType: number; normalized: boolean } | null,
): TangentValidityTolerances {
  const et = encodingError(tangent.componentType, tangent.normalized);
  const en = normal ? encodingError(normal.componentType, normal.normalized) : 0;
  return { unitLength: UNIT_LENGTH_TOLERANCE + et, orthogonalCosine: ORTHOGONAL_COSINE_TOLERANCE + et + en };
}

/** Default angle (degrees) beyond which a stored tangent counts as mismatched (DESIGN.md). */
export const DEFAULT_TANGENT_MISMATCH_DEG = 1;

/** Default smoothing angle (degrees) for `--normals smooth`. Common practice. */
export const DEFAULT_SMOOTH_ANGLE_DEG = 60;

/**
 * UV-overlap test, absolute part: two UV triangles whose penetration along some edge normal
 * is at most this many UV units only touch (about 1/120 of a texel of an 8192-pixel map, and
 * above the float32 rounding of UVs below 8). Common practice, no single source.
 */
export const UV_OVERLAP_ABSOLUTE = 1e-6;

/**
 * UV-overlap test, relative part: a penetration of at most this fraction of the smaller of the
 * two triangles' extents along the same edge normal is touching, not overlap (absorbs rounding
 * where a vertex lies on another triangle's edge). Common practice, no single source.
 */
export const UV_OVERLAP_RELATIVE = 1e-4;

/**
 * Stacked UV shells: two shells with the same UV points count as laid exactly on one another
 * when their summed UV areas (|det| per triangle, float64) differ by at most this fraction:
 * summation order alone moves the sums by about 1e-15 relative, a real difference of layout
 * by far more. Common practice, no single source.
 */
export const UV_SHELL_AREA_RELATIVE = 1e-9;

/**
 * Normal-map conversion: a texel's interpolated frame [t, b, N] whose determinant is at most
 * this (in absolute value; unit vertex frames give about 1) cannot be inverted, and object to
 * tangent space falls back to the transpose for that texel (counted). This happens only where
 * the interpolated handedness passes through zero between vertices of opposite sign. Common
 * practice, no single source.
 */
export const TEXEL_FRAME_MIN_DET = 1e-6;

/** Normal-map conversion: a texel vector shorter than this has no direction and gets the fallback (counted). */
export const TEXEL_ZERO_LENGTH = 1e-9;
