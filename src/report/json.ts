/**
 * Builds the JSON report ("tanframe-report/1", DESIGN.md) from file reports.
 */
import type { FrameMethod } from '../mesh/types.js';
import type { FileReport, Report, ReportSummary } from './types.js';

/** Findings (problems, not notes) of a file's checked primitives, summed. */
export function findingCount(f: FileReport): number {
  let w = 0;
  for (const p of f.primitives) {
    if (p.action === 'skipped') continue;
    const s = p.storedTangents;
    w += p.degenerateUv.count + p.degenerateGeometry.count + p.invalidValues.count + p.badNormals.count + p.uvOverlap.count;
    if (s) w += s.invalid + s.mismatched;
  }
  return w;
}

/**
 * Totals over `files`; `seconds` is the wall time of the whole run. Each file counts once in
 * failed, skipped, upToDate, unchecked or ok, and each ok file once in gated (a gate tripped),
 * withFindings (findings, no gate) or clean. An unchecked file whose `unchecked` gate tripped
 * counts as unchecked and as gated.
 */
export function summarize(files: FileReport[], seconds: number): ReportSummary {
  const s: ReportSummary = {
    files: files.length, ok: 0, failed: 0, skipped: 0, upToDate: 0, unchecked: 0, clean: 0, withFindings: 0, gated: 0, triangles: 0,
    degenerateUv: 0, degenerateGeometry: 0, invalidValues: 0, mirroredTriangles: 0, stackedShells: 0, gatesTripped: [], seconds,
  };
  const gates = new Set<string>();
  for (const f of files) {
    if (f.status === 'ok') {
      s.ok++;
      if (f.gates.length > 0) s.gated++;
      else if (findingCount(f) > 0) s.withFindings++;
      else s.clean++;
    } else if (f.status === 'failed') s.failed++;
    else if (f.status === 'up-to-date') s.upToDate++;
    else if (f.status === 'unchecked') {
      s.unchecked++;
      if (f.gates.length > 0) s.gated++;
    } else s.skipped++;
    for (const g of f.gates) gates.add(g);
    for (const p of f.primitives) {
      s.triangles += p.triangles;
      s.degenerateUv += p.degenerateUv.count;
      s.degenerateGeometry += p.degenerateGeometry.count;
      s.invalidValues += p.invalidValues.count;
      s.mirroredTriangles += p.mirroredTriangles;
      s.stackedShells += p.stackedShells?.count ?? 0;
    }
  }
  s.gatesTripped = [...gates].sort();
  return s;
}

/** Assembles the whole report. */
export function buildReport(
  command: 'bake' | 'audit',
  version: string,
  method: FrameMethod,
  options: Record<string, unknown>,
  files: FileReport[],
  seconds: number,
): Report {
  return {
    schema: 'tanframe-report/1',
    tool: { name: 'tanframe', version },
    command,
    method,
    options,
    files: files.map((f) => ({ ...f, gateFigures: f.gateFigures ?? [], waived: f.waived ?? [] })),
    summary: summarize(files, seconds),
  };
}
