/**
 * The report schema "tanframe-report/1" (DESIGN.md). Field names and meanings are a
 * contract: extra fields may be added, these keep their names.
 */
import type { FrameMethod } from '../mesh/types.js';

/** A count with the first triangle indices (positions in the expanded triangle list). */
export interface TriangleFinding {
  count: number;
  triangles: number[];
}

/** Stored-vs-recomputed tangent comparison. */
export interface StoredTangentReport {
  /** Input vertices whose stored tangent is invalid (not unit, not orthogonal, w not +-1, not finite); not compared. */
  invalid: number;
  /**
   * Corners not compared because the recomputed frame is undefined there (no contributing
   * triangle reaches the vertex; the file holds some default, tanframe its fallback).
   */
  undefinedFrames: number;
  meanAngleDeg: number;
  p95AngleDeg: number;
  maxAngleDeg: number;
  signMismatch: number;
  /** Corners compared (valid stored tangent, defined recomputed frame). */
  compared: number;
  /** Corners whose angle exceeds the `--tolerance` or whose sign differs. */
  mismatched: number;
}

/** One mesh primitive's findings. */
export interface PrimitiveReport {
  mesh: number;
  meshName: string | null;
  primitive: number;
  material: number | null;
  uvSet: number | null;
  /** The material reads a map through the tangent frame (normal, clearcoat normal, anisotropy). */
  normalMapped: boolean;
  method: FrameMethod;
  /** What happened: 'baked' (frames written), 'kept' (valid stored tangents kept), 'skipped'. */
  action: 'baked' | 'kept' | 'skipped';
  /** Why a primitive was skipped: 'not-triangles', 'no-texcoord', 'no-normal-texture', 'no-position', 'empty'. */
  skipReason: string | null;
  triangles: number;
  /** Vertices the primitive uses: those its indices reference (all when it has none); a skipped primitive's accessor count. */
  verticesIn: number;
  verticesOut: number;
  splitVertices: number;
  /**
   * Of `splitVertices`, those split along a mirror seam: the copy's handedness w differs from
   * the w of the vertex it was split from (countMirrorSeamSplits). 0 when frames were kept.
   */
  mirrorSeamSplits: number;
  degenerateUv: TriangleFinding;
  degenerateGeometry: TriangleFinding;
  invalidValues: { count: number };
  badNormals: { count: number };
  /** A note, not a problem: triangles with mirrored UVs (a deliberate layout). */
  mirroredTriangles: number;
  /** Triangles that partly overlap another in UV space (a problem: one texel, two surfaces). */
  uvOverlap: TriangleFinding;
  /**
   * A note, not a problem: triangles lying exactly on another UV shell (tiling, shared or
   * mirrored halves): exact copies, or shells with the same UV points and area however
   * triangulated. Not counted in `uvOverlap`.
   */
  stackedShells: TriangleFinding;
  storedTangents: StoredTangentReport | null;
  /** Normals this run generated ('flat' | 'smooth'), or null when the file's were used. */
  normalsGenerated: 'flat' | 'smooth' | null;
  /** Output vertices whose tangent came from the documented fallback. */
  fallbackTangents: number;
  /** bake: how the primitive's geometry was stored in the input and is in the output (`--compression`). */
  compression?: { in: 'draco' | 'meshopt' | 'quantized' | 'none'; out: 'draco' | 'meshopt' | 'quantized' | 'none' };
}

/** One input file's outcome. */
export interface FileReport {
  input: string;
  output: string | null;
  /**
   * 'unchecked': gates were asked for and no primitive could be checked (each says why in
   * skipReason); 'up-to-date': bake skipped the file, its outputs match the state of an
   * earlier run (no primitives listed).
   */
  status: 'ok' | 'failed' | 'skipped' | 'up-to-date' | 'unchecked';
  error: { code: string; message: string } | null;
  gates: string[];
  /** Each asked-for gate's count against its limit (tripped or not, waived ones included). */
  gateFigures?: GateFigure[];
  /** Gates a config waiver let through, with the waiver's reason. */
  waived?: { gate: string; reason: string }[];
  primitives: PrimitiveReport[];
  warnings: string[];
  /**
   * What the run did to the file beyond baking, one line each: e.g. "decompressed
   * KHR_draco_mesh_compression" (audit), "... (written uncompressed: --compression none)" (bake).
   */
  notes: string[];
  /**
   * bake: bytes of the input's geometry files (the file and its external buffers) and of the
   * output's (the file and its .bin; images beside a .gltf are not counted).
   */
  bytesIn?: number;
  bytesOut?: number;
  /** Wall time spent on this file (kept apart so the rest of the report is reproducible). */
  seconds: number;
}

/** One gate's figure for one file: what it counted, over what, against which limit. */
export interface GateFigure {
  gate: string;
  count: number;
  /** The population a percent limit is a share of (triangles, corners, vertices; primitives for 'unchecked'). */
  population: number;
  of: 'triangles' | 'corners' | 'vertices' | 'primitives';
  /** The limit in force, as written: "0" or "1%". */
  limit: string;
  tripped: boolean;
  /**
   * tangent-mismatch only: vertices with an invalid stored tangent, and the vertices of the
   * primitives that store tangents; judged against the same limit as the corners.
   */
  invalid?: number;
  invalidOf?: number;
}

/** Totals over all files. */
export interface ReportSummary {
  files: number;
  ok: number;
  failed: number;
  skipped: number;
  /** Files bake left alone because nothing changed since the last run. */
  upToDate: number;
  /** Files with gates asked for where nothing could be checked. */
  unchecked: number;
  /** Of the files processed (ok): no finding at all. */
  clean: number;
  /** Of the files processed (ok): findings, no gate tripped. */
  withFindings: number;
  /** Files with a gate tripped (waived gates do not count). */
  gated: number;
  triangles: number;
  degenerateUv: number;
  degenerateGeometry: number;
  invalidValues: number;
  /** Notes, not problems: mirrored triangles and triangles in stacked UV shells. */
  mirroredTriangles: number;
  stackedShells: number;
  gatesTripped: string[];
  seconds: number;
}

/** The whole JSON report. */
export interface Report {
  schema: 'tanframe-report/1';
  tool: { name: 'tanframe'; version: string };
  command: 'bake' | 'audit';
  method: FrameMethod;
  options: Record<string, unknown>;
  files: FileReport[];
  summary: ReportSummary;
}
