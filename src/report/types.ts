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
  mirroredTriangles: number;
  uvOverlap: TriangleFinding;
  storedTangents: StoredTangentReport | null;
  /** Normals this run generated ('flat' | 'smooth'), or null when the file's were used. */
  normalsGenerated: 'flat' | 'smooth' | null;
  /** Output vertices whose tangent came from the documented fallback. */
  fallbackTangents: number;
}

/** One input file's outcome. */
export interface FileReport {
  input: string;
  output: string | null;
  /** 'up-to-date': bake skipped the file, its outputs match the state of an earlier run (no primitives listed). */
  status: 'ok' | 'failed' | 'skipped' | 'up-to-date';
  error: { code: string; message: string } | null;
  gates: string[];
  primitives: PrimitiveReport[];
  warnings: string[];
  /**
   * What the run did to the file beyond baking, one line each: e.g. "decompressed
   * KHR_draco_mesh_compression" (the output is written uncompressed).
   */
  notes: string[];
  /** Wall time spent on this file (kept apart so the rest of the report is reproducible). */
  seconds: number;
}

/** Totals over all files. */
export interface ReportSummary {
  files: number;
  ok: number;
  failed: number;
  skipped: number;
  /** Files bake skipped as up-to-date. */
  upToDate: number;
  triangles: number;
  degenerateUv: number;
  degenerateGeometry: number;
  invalidValues: number;
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
