/**
 * The human summary printed after `bake` and `audit`: one line per file, worst first, and a
 * closing total. Colour only when the caller says the stream is a terminal and NO_COLOR is
 * unset.
 */
import type { FileReport, Report } from './types.js';

/** Styling switch for the summary. */
export interface SummaryStyle {
  color: boolean;
}

const paint = (on: boolean, code: string, s: string) => (on ? `\u001b[${code}m${s}\u001b[0m` : s);

function n(x: number): string {
  return x.toLocaleString('en-US');
}

function severity(f: FileReport): number {
  if (f.status === 'failed') return 3;
  if (f.gates.length) return 2;
  if (f.primitives.some((p) => p.degenerateUv.count > 0 || p.invalidValues.count > 0)) return 1;
  return 0;
}

function fileLine(f: FileReport, style: SummaryStyle): string {
  if (f.status === 'failed') {
    return `  ${paint(style.color, '31;1', 'FAILED ')} ${f.input}: ${f.error?.message ?? 'failed'} [${f.error?.code ?? 'internal'}]`;
  }
  const done = f.primitives.filter((p) => p.action !== 'skipped');
  const tri = done.reduce((a, p) => a + p.triangles, 0);
  const vin = done.reduce((a, p) => a + p.verticesIn, 0);
  const vout = done.reduce((a, p) => a + p.verticesOut, 0);
  const mirrored = done.reduce((a, p) => a + p.mirroredTriangles, 0);
  const degenerate = done.reduce((a, p) => a + p.degenerateUv.count, 0);
  const skipped = f.primitives.length - done.length;
  const tag = f.gates.length ? paint(style.color, '33;1', 'GATED  ') : paint(style.color, '32', 'ok     ');
  const parts = [
    `${done.length} of ${f.primitives.length} primitives`,
    `${n(tri)} triangles`,
    `vertices ${n(vin)} -> ${n(vout)}`,
    `mirrored ${n(mirrored)}`,
    `degenerate UV ${degenerate > 0 ? paint(style.color, '33', n(degenerate)) : '0'}`,
  ];
  if (skipped) parts.push(`${skipped} skipped`);
  if (f.gates.length) parts.push(`gates: ${f.gates.join(', ')}`);
  parts.push(`${(f.seconds * 1000).toFixed(0)} ms`);
  const target = f.output ? ` -> ${f.output}` : '';
  return `  ${tag} ${f.input}${target}\n           ${parts.join(' | ')}`;
}

/** Renders the summary of `report` as text (ends with a newline). */
export function renderSummary(report: Report, style: SummaryStyle): string {
  const files = [...report.files].sort((a, b) => severity(b) - severity(a) || (a.input < b.input ? -1 : a.input > b.input ? 1 : 0));
  const lines = [`tanframe ${report.command} (${report.method})`];
  for (const f of files) {
    lines.push(fileLine(f, style));
    for (const w of f.warnings) lines.push(`           warning: ${w}`);
  }
  const s = report.summary;
  const totals = [
    `${s.files} file${s.files === 1 ? '' : 's'}: ${s.ok} ok, ${s.failed} failed`,
    `${n(s.triangles)} triangles`,
    `${n(s.degenerateUv)} degenerate UV`,
    `${s.seconds.toFixed(2)} s`,
  ];
  lines.push(`total: ${totals.join(' | ')}`);
  if (s.gatesTripped.length) lines.push(paint(style.color, '33;1', `gates tripped: ${s.gatesTripped.join(', ')}`));
  return lines.join('\n') + '\n';
}
