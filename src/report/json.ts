/**
 * Builds the JSON report ("tanframe-report/1", DESIGN.md) from file reports.
 */
import type { FrameMethod } from '../mesh/types.js';
import type { FileReport, Report, ReportSummary } from './types.js';

/** Totals over `files`; `seconds` is the wall time of the whole run. */
export function summarize(files: FileReport[], seconds: number): ReportSummary {
  const s: ReportSummary = {
    files: files.length, ok: 0, failed: 0, skipped: 0, upToDate: 0, triangles: 0,
    degenerateUv: 0, degenerateGeometry: 0, invalidValues: 0, gatesTripped: [], seconds,
  };
  const gates = new Set<string>();
  for (const f of files) {
    if (f.status === 'ok') s.ok++;
    else if (f.status === 'failed') s.failed++;
    else if (f.status === 'up-to-date') s.upToDate++;
    else s.skipped++;
    for (const g of f.gates) gates.add(g);
    for (const p of f.primitives) {
      s.triangles += p.triangles;
      s.degenerateUv += p.degenerateUv.count;
      s.degenerateGeometry += p.degenerateGeometry.count;
      s.invalidValues += p.invalidValues.count;
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
    files,
    summary: summarize(files, seconds),
  };
}
