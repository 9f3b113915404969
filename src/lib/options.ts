/**
 * Options shared by the library's file processing and the CLI commands.
 */
import type { FrameMethod, TangentWeight } from '../mesh/types.js';
import { DEFAULT_MAX_TRIANGLES } from '../io/limits.js';
import { DEFAULT_SMOOTH_ANGLE_DEG, DEFAULT_TANGENT_MISMATCH_DEG, UV_DEGENERATE_RELATIVE } from '../mesh/tolerances.js';

/** Gate names `--fail-on` accepts (DESIGN.md). */
export const GATE_NAMES = [
  'degenerate-uv',
  'degenerate-geometry',
  'invalid-values',
  'bad-normals',
  'tangent-mismatch',
  'missing-tangents',
  'uv-overlap',
] as const;
export type GateName = (typeof GATE_NAMES)[number];

/** How one file is processed. */
export interface ProcessOptions {
  method: FrameMethod;
  weight: TangentWeight;
  /** TEXCOORD set to use, or null for the normal texture's set (else 0). */
  uv: number | null;
  allPrimitives: boolean;
  keepExisting: boolean;
  normals: 'keep' | 'flat' | 'smooth';
  smoothAngle: number;
  tangentType: 'float' | 'snorm16' | 'snorm8';
  failOn: GateName[];
  maxDegenerateUv: number;
  /** Degrees beyond which a stored tangent counts as mismatched. */
  tolerance: number;
  uvEpsilon: number;
  /** Most triangles one file may hold; larger files fail with 'too-large' before decoding. */
  maxTriangles: number;
}

/** The defaults DESIGN.md gives. */
export function defaultProcessOptions(): ProcessOptions {
  return {
    method: 'mikktspace',
    weight: 'derivative',
    uv: null,
    allPrimitives: false,
    keepExisting: false,
    normals: 'keep',
    smoothAngle: DEFAULT_SMOOTH_ANGLE_DEG,
    tangentType: 'float',
    failOn: [],
    maxDegenerateUv: 0,
    tolerance: DEFAULT_TANGENT_MISMATCH_DEG,
    uvEpsilon: UV_DEGENERATE_RELATIVE,
    maxTriangles: DEFAULT_MAX_TRIANGLES,
  };
}
