/**
 * Based on: the JUnit XML report format as CI servers read it (testsuites > testsuite >
 * testcase with failure / error / skipped children; counts and times as attributes), in the
 * shape Maven Surefire writes and the Jenkins JUnit schema describes. XML 1.0 (W3C) for the
 * escaping and the allowed characters.
 * One test case per input file: failed (<failure>) when a --fail-on gate tripped, in error
 * (<error>) when the file could not be read or processed, skipped when the file was skipped,
 * is up to date or could not be checked at all (unchecked, unless `--fail-on unchecked` made it
 * fail). Waived gates with their reasons, notes and skip reasons go to <system-out>.
 */
import { cleanText } from '../mesh/text.js';
import { gateLine, notesText, skippedLine } from './summary.js';
import type { FileReport, PrimitiveReport, Report } from './types.js';

/** Triangle indices a failure text lists per primitive and finding. */
export const JUNIT_LISTED_TRIANGLES = 20;

/**
 * Escapes text for XML content and attributes. Our own line breaks (tab, newline) stay; every
 * other character XML 1.0 does not allow, or a terminal would act on, is written as a visible
 * escape (see cleanText). Strings from files go through cleanText first (one line each).
 */
export function xmlText(s: string): string {
  return s.split('\n').map((line) => line.split('\t').map(cleanText).join('\t')).join('\n')
    .replace(/[&<>"]/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;' })[c]!);
}

function seconds(x: number): string {
  return (Number.isFinite(x) && x > 0 ? x : 0).toFixed(3);
}

function where(p: PrimitiveReport): string {
  return `mesh ${p.mesh}${p.meshName ? ` "${cleanText(p.meshName)}"` : ''} primitive ${p.primitive}`;
}

function firstOf(triangles: number[], count: number): string {
  const shown = triangles.slice(0, JUNIT_LISTED_TRIANGLES).join(', ');
  return count > JUNIT_LISTED_TRIANGLES ? `${shown}, ...` : shown;
}

/** One line per primitive that contributes to `gate`, naming the primitive and its first triangles. */
export function gateDetails(gate: string, f: FileReport): string[] {
  const lines: string[] = [];
  for (const p of f.primitives) {
    if (p.action === 'skipped') continue;
    const tri = (label: string, finding: { count: number; triangles: number[] }) => {
      if (finding.count > 0) lines.push(`${where(p)}: ${finding.count} ${label}; first triangles: ${firstOf(finding.triangles, finding.count)}`);
    };
    switch (gate) {
      case 'degenerate-uv': tri('degenerate UV triangles', p.degenerateUv); break;
      case 'degenerate-geometry': tri('degenerate geometry triangles', p.degenerateGeometry); break;
      case 'uv-overlap': tri('overlapping UV triangles', p.uvOverlap); break;
      case 'invalid-values':
        if (p.invalidValues.count > 0) lines.push(`${where(p)}: ${p.invalidValues.count} vertices with NaN or infinite values`);
        break;
      case 'bad-normals':
        if (p.badNormals.count > 0) lines.push(`${where(p)}: ${p.badNormals.count} vertices with zero, non-unit or flipped normals`);
        break;
      case 'tangent-mismatch': {
        const s = p.storedTangents;
        if (s && (s.invalid > 0 || s.mismatched > 0 || s.signMismatch > 0)) {
          lines.push(
            `${where(p)}: ${s.mismatched} of ${s.compared} corners differ from the recomputed frame ` +
              `(max ${s.maxAngleDeg.toFixed(2)} deg, mean ${s.meanAngleDeg.toFixed(3)} deg), ${s.signMismatch} with the other sign, ${s.invalid} invalid stored tangents`,
          );
        }
        break;
      }
      case 'missing-tangents':
        if (p.normalMapped && p.storedTangents === null) lines.push(`${where(p)}: normal-mapped but stores no TANGENT`);
        break;
      default: break;
    }
  }
  return lines;
}

function shortReason(gate: string, f: FileReport): string {
  let count = 0, first: number[] = [];
  for (const p of f.primitives) {
    if (p.action === 'skipped') continue;
    const finding = gate === 'degenerate-uv' ? p.degenerateUv : gate === 'degenerate-geometry' ? p.degenerateGeometry : gate === 'uv-overlap' ? p.uvOverlap : null;
    if (!finding) continue;
    if (first.length === 0 && finding.count > 0) first = finding.triangles.slice(0, 5);
    count += finding.count;
  }
  if (count === 0) return gate;
  return `${gate} (${count} triangles; first: ${first.join(', ')}${count > first.length ? ', ...' : ''})`;
}

/** Waived gates with their reasons, notes and skip reasons, as <system-out> (empty string when none). */
function systemOut(f: FileReport): string {
  const lines: string[] = [];
  for (const w of f.waived ?? []) {
    const g = (f.gateFigures ?? []).find((x) => x.gate === w.gate);
    lines.push(`waived: ${g ? gateLine(g) : w.gate} (${cleanText(w.reason)})`);
  }
  const notes = notesText(f);
  if (notes) lines.push(`notes (not problems): ${notes}`);
  const skipped = skippedLine(f);
  if (skipped) lines.push(skipped);
  return lines.length ? `\n      <system-out>${xmlText(lines.join('\n'))}</system-out>` : '';
}

/** The <testcase> of one file. */
function testCase(f: FileReport, command: string): string {
  const open = `    <testcase classname="tanframe.${command}" name="${xmlText(cleanText(f.input))}" time="${seconds(f.seconds)}"`;
  const out = systemOut(f);
  if (f.status === 'unchecked' && f.gates.length === 0) {
    const why = skippedLine(f) ?? 'the file holds no primitives';
    return `${open}>\n      <skipped message="${xmlText(`unchecked: nothing could be checked (${why})`)}"/>${out}\n    </testcase>`;
  }
  if (f.status === 'up-to-date') return `${open}>\n      <skipped message="up to date"/>${out}\n    </testcase>`;
  if (f.status === 'failed') {
    const code = f.error?.code ?? 'internal';
    const message = cleanText(f.error?.message ?? 'failed');
    return `${open}>\n      <error type="${xmlText(code)}" message="${xmlText(`${code}: ${message}`)}">${xmlText(`the file could not be processed: ${message} [${code}]`)}</error>\n    </testcase>`;
  }
  if (f.status === 'skipped') return `${open}>\n      <skipped message="skipped"/>\n    </testcase>`;
  if (f.gates.length === 0) return out ? `${open}>${out}\n    </testcase>` : `${open}/>`;
  const message = `gates tripped: ${f.gates.map((g) => shortReason(g, f)).join('; ')}`;
  const body: string[] = [];
  for (const g of f.gates) {
    const figure = (f.gateFigures ?? []).find((x) => x.gate === g);
    body.push(figure ? `${gateLine(figure)}:` : `${g}:`);
    for (const line of gateDetails(g, f)) body.push(`  ${line}`);
  }
  return `${open}>\n      <failure type="${xmlText(f.gates.join(','))}" message="${xmlText(message)}">${xmlText(body.join('\n'))}</failure>${out}\n    </testcase>`;
}

/**
 * Renders `report` as a JUnit XML document: one <testsuite> named for the command holding one
 * <testcase> per file in report order. Times come from the `seconds` fields; everything else
 * is a pure function of the report. Returns UTF-8 text ending with a newline.
 */
export function renderJunit(report: Report): string {
  const files = report.files;
  const failures = files.filter((f) => f.status !== 'failed' && f.status !== 'skipped' && f.gates.length > 0).length;
  const errors = files.filter((f) => f.status === 'failed').length;
  const skipped = files.filter(
    (f) => f.status === 'skipped' || f.status === 'up-to-date' || (f.status === 'unchecked' && f.gates.length === 0),
  ).length;
  const name = `tanframe ${report.command} (${report.method})`;
  const time = seconds(report.summary.seconds);
  const lines = [
    '<?xml version="1.0" encoding="UTF-8"?>',
    `<testsuites name="${xmlText(name)}" tests="${files.length}" failures="${failures}" errors="${errors}" time="${time}">`,
    `  <testsuite name="${xmlText(name)}" tests="${files.length}" failures="${failures}" errors="${errors}" skipped="${skipped}" time="${time}">`,
  ];
  for (const f of files) lines.push(testCase(f, report.command));
  lines.push('  </testsuite>', '</testsuites>');
  return lines.join('\n') + '\n';
}
