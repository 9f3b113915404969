/**
 * Options shared by the library's file processing and the CLI commands.
 */
import type { FrameMethod, TangentWeight } from '../mesh/types.js';
import { DEFAULT_MAX_TRIANGLES } from '../io/limits.js';
import { DEFAULT_SMOOTH_ANGLE_DEG, DEFAULT_TANGENT_MISMATCH_DEG, UV_DEGENERATE_RELATIVE } from '../mesh/tolerances.js';

/** The state file's name, in the output folder (src/lib/runState.ts reads and writes it). */
export const STATE_FILE_NAME = '.tanframe-state.json';

/** Gate names `--fail-on` accepts (DESIGN.md). */
export const GATE_NAMES = [
  'degenerate-uv',
  'degenerate-geometry',
  'invalid-values',
  'bad-normals',
  'tangent-mismatch',
  'missing-tangents',
  'uv-overlap',
  'unchecked',
] as const;
export type GateName = (typeof GATE_NAMES)[number];

/**
 * How much of a gate's finding a file may have before the gate trips: more than `count`
 * items, or more than `percent` percent of the population the gate counts over (triangles,
 * corners or vertices; see GATE_INFO in gates.ts).
 */
export type GateLimit = { count: number } | { percent: number };

/** The `--compression` choices. */
export const COMPRESSION_MODES = ['keep', 'none', 'draco', 'meshopt'] as const;
export type CompressionMode = (typeof COMPRESSION_MODES)[number];

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
  /**
   * True when no TANGENT type was asked for (`--tangent-type` absent): with `compression`
   * 'keep', a primitive whose NORMAL is a normalized BYTE or SHORT (KHR_mesh_quantization)
   * then gets TANGENT of the same type instead of `tangentType`.
   */
  tangentTypeFromInput: boolean;
  /**
   * How baked primitives are stored (`--compression`, DESIGN.md): 'keep' as they came in
   * (Draco as Draco, meshopt views as meshopt, quantized as quantized), 'none' decoded and
   * plain, 'draco' / 'meshopt' every baked primitive compressed that way. Primitives that are
   * not baked keep their bytes in every mode but 'none'.
   */
  compression: CompressionMode;
  failOn: GateName[];
  /**
   * Per gate, how much a file may have before the gate trips; a gate not named here takes
   * its default (DEFAULT_LIMITS in gates.ts). `--max-degenerate-uv n` is `degenerate-uv: {count: n}`.
   */
  limits: Partial<Record<GateName, GateLimit>>;
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
    tangentTypeFromInput: true,
    compression: 'keep',
    failOn: [],
    limits: {},
    tolerance: DEFAULT_TANGENT_MISMATCH_DEG,
    uvEpsilon: UV_DEGENERATE_RELATIVE,
    maxTriangles: DEFAULT_MAX_TRIANGLES,
  };
}
