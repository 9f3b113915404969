/**
 * The human summary printed after `bake` and `audit`: files worst first, each with a compact
 * table of its primitives' findings (worst first), then a closing total. Colour only when the
 * caller says the stream is a terminal and NO_COLOR is unset.
 */
import { cleanText, warningTotal } from '../mesh/text.js';
import type { FileReport, GateFigure, PrimitiveReport, Report } from './types.js';

/** Styling switch for the summary. */
export interface SummaryStyle {
  color: boolean;
}

/** Files without findings listed one per line before the rest are only counted. */
export const SUMMARY_CLEAN_FILES = 20;
/** Primitive rows shown per file before the rest are only counted. */
export const SUMMARY_PRIMITIVE_ROWS = 12;

const paint = (on: boolean, code: string, s: string) => (on && s !== '' ? `\u001b[${code}m${s}\u001b[0m` : s);

function n(x: number): string {
  return x.toLocaleString('en-US');
}

function storedMismatch(p: PrimitiveReport): number {
  const s = p.storedTangents;
  return s ? s.invalid + s.mismatched : 0;
}

/**
 * The line a gate prints: `degenerate-uv 12 > 0`, or with a percent limit
 * `tangent-mismatch 4.20% > 1% (120 of 2,860 corners)`; tangent-mismatch adds its invalid
 * stored tangents when there are any (`, 3 invalid stored tangents of 400 vertices`).
 */
export function gateLine(f: GateFigure): string {
  if (f.gate === 'unchecked') return 'unchecked: nothing could be checked';
  const pct = f.limit.endsWith('%');
  const limit = pct ? Number(f.limit.slice(0, -1)) : Number(f.limit);
  const share = (count: number, of: number) => (of > 0 ? (count * 100) / of : 0);
  const part = (count: number, of: number) => (pct ? share(count, of) > limit : count > limit) ? '>' : '<=';
  const extra = f.invalid ? `${n(f.invalid)} invalid stored tangents of ${n(f.invalidOf ?? 0)} vertices` : '';
  if (pct) {
    const s = share(f.count, f.population);
    return `${f.gate} ${s.toFixed(2)}% ${part(f.count, f.population)} ${f.limit} (${n(f.count)} of ${n(f.population)} ${f.of}${extra ? `; ${extra}, ${share(f.invalid!, f.invalidOf ?? 0).toFixed(2)}% ${part(f.invalid!, f.invalidOf ?? 0)} ${f.limit}` : ''})`;
  }
  return `${f.gate} ${n(f.count)} ${part(f.count, f.population)} ${f.limit}${extra ? ` (${extra}, ${part(f.invalid!, f.invalidOf ?? 0)} ${f.limit})` : ''}`;
}

/** Findings of one primitive, summed (the order of rows and files); 0 when skipped. */
export function primitiveWeight(p: PrimitiveReport): number {
  if (p.action === 'skipped') return 0;
  return p.degenerateUv.count + p.degenerateGeometry.count + p.invalidValues.count + p.badNormals.count + p.uvOverlap.count + storedMismatch(p);
}

/** Findings of a file's primitives, summed. */
export function fileWeight(f: FileReport): number {
  let w = 0;
  for (const p of f.primitives) w += primitiveWeight(p);
  return w;
}

/** 3 failed, 2 a gate tripped, 1 findings or nothing checked (unchecked), 0 clean. */
export function severity(f: FileReport): number {
  if (f.status === 'failed') return 3;
  if (f.gates.length) return 2;
  if (fileWeight(f) > 0 || f.status === 'unchecked') return 1;
  return 0;
}

/** Notes of a file (not problems): mirrored triangles and triangles in stacked UV shells, over its checked primitives. */
export function fileNotes(f: FileReport): { mirrored: number; stacked: number } {
  let mirrored = 0, stacked = 0;
  for (const p of f.primitives) {
    if (p.action === 'skipped') continue;
    mirrored += p.mirroredTriangles;
    stacked += p.stackedShells?.count ?? 0;
  }
  return { mirrored, stacked };
}

/** The notes of a file in words ("4 mirrored triangles, 8 triangles in stacked UV shells"), or '' without any. */
export function notesText(f: FileReport): string {
  const { mirrored, stacked } = fileNotes(f);
  const parts: string[] = [];
  if (mirrored) parts.push(`${n(mirrored)} mirrored triangle${mirrored === 1 ? '' : 's'}`);
  if (stacked) parts.push(`${n(stacked)} triangle${stacked === 1 ? '' : 's'} in stacked UV shells`);
  return parts.join(', ');
}

const COLUMNS = ['primitive', 'triangles', 'vertices', 'splits', 'UV degen', 'geo degen', 'invalid', 'normals', 'overlap', 'stored tangents'];
/** Report gate that each finding column belongs to (for colouring), by column index. */
const COLUMN_GATE: Record<number, string> = { 4: 'degenerate-uv', 5: 'degenerate-geometry', 6: 'invalid-values', 7: 'bad-normals', 8: 'uv-overlap', 9: 'tangent-mismatch' };
const STORED_COLUMN = 9;

function storedCell(p: PrimitiveReport): string {
  const s = p.storedTangents;
  if (!s) return p.normalMapped ? 'missing' : '-';
  const parts = [`mean ${s.meanAngleDeg.toFixed(3)}\u00b0 max ${s.maxAngleDeg.toFixed(2)}\u00b0`];
  if (s.mismatched) parts.push(`${n(s.mismatched)} off`);
  if (s.signMismatch) parts.push(`${n(s.signMismatch)} sign`);
  if (s.invalid) parts.push(`${n(s.invalid)} invalid`);
  if (s.undefinedFrames) parts.push(`${n(s.undefinedFrames)} undefined`);
  return parts.join(', ');
}

function primitiveCells(p: PrimitiveReport): string[] {
  const meshName = p.meshName ? cleanText(p.meshName) : '';
  const name = meshName ? ` ${meshName.length > 20 ? meshName.slice(0, 19) + '\u2026' : meshName}` : '';
  return [
    `m${p.mesh}p${p.primitive}${name}`,
    n(p.triangles),
    `${n(p.verticesIn)}>${n(p.verticesOut)}`,
    p.mirrorSeamSplits ? `${n(p.splitVertices)} (${n(p.mirrorSeamSplits)} seam)` : n(p.splitVertices),
    n(p.degenerateUv.count),
    n(p.degenerateGeometry.count),
    n(p.invalidValues.count),
    n(p.badNormals.count),
    n(p.uvOverlap.count),
    storedCell(p),
  ];
}

/** Lays out rows as aligned columns (text left, numbers right); colours cells afterwards. */
function table(rows: string[][], f: FileReport, style: SummaryStyle, indent: string): string[] {
  const widths = COLUMNS.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
  const left = (i: number) => i === 0 || i === COLUMNS.length - 1;
  const pad = (s: string, i: number) => (left(i) ? s.padEnd(widths[i]) : s.padStart(widths[i]));
  const out = [indent + COLUMNS.map((h, i) => paint(style.color, '2', pad(h, i))).join('  ').trimEnd()];
  for (const r of rows) {
    const cells = r.map((cell, i) => {
      const text = pad(cell, i);
      const gate = COLUMN_GATE[i];
      const nonZero = i === STORED_COLUMN ? cell !== '-' && /off|sign|invalid|missing/.test(cell) : gate !== undefined && cell !== '0';
      if (!nonZero) return text;
      const tripped = f.gates.includes(gate) || (i === STORED_COLUMN && cell === 'missing' && f.gates.includes('missing-tangents'));
      return paint(style.color, tripped ? '31;1' : '33', text);
    });
    out.push((indent + cells.join('  ')).trimEnd());
  }
  return out;
}

/** Why primitives were not checked: "2 primitives skipped (no-texcoord 2)", or null when all were checked. */
export function skippedLine(f: FileReport): string | null {
  const reasons = new Map<string, number>();
  for (const p of f.primitives) {
    if (p.action !== 'skipped') continue;
    const r = cleanText(p.skipReason ?? 'skipped');
    reasons.set(r, (reasons.get(r) ?? 0) + 1);
  }
  if (reasons.size === 0) return null;
  const total = [...reasons.values()].reduce((a, b) => a + b, 0);
  const list = [...reasons.entries()].sort((a, b) => (a[0] < b[0] ? -1 : 1)).map(([r, k]) => `${r} ${k}`).join(', ');
  return `${total} primitive${total === 1 ? '' : 's'} skipped (${list})`;
}

/** Size change beyond which the summary shows it (a share of bytesIn): our choice. */
export const SIZE_CHANGE_SHOWN = 0.1;

function kilobytes(bytes: number): string {
  return bytes < 10240 ? `${(bytes / 1024).toFixed(1)} KB` : `${n(Math.round(bytes / 1024))} KB`;
}

/** "size 14.2 KB -> 27.5 KB (+94%)" when a bake changed the file's size by more than SIZE_CHANGE_SHOWN, else null. */
export function sizeChangeText(f: FileReport): string | null {
  if (typeof f.bytesIn !== 'number' || typeof f.bytesOut !== 'number' || f.bytesIn <= 0) return null;
  const change = f.bytesOut / f.bytesIn - 1;
  if (Math.abs(change) <= SIZE_CHANGE_SHOWN) return null;
  const percent = Math.round(change * 100);
  return `size ${kilobytes(f.bytesIn)} -> ${kilobytes(f.bytesOut)} (${percent > 0 ? '+' : ''}${percent}%)`;
}

function fileBlock(f: FileReport, style: SummaryStyle): string[] {
  const input = cleanText(f.input);
  const target = f.output ? ` -> ${cleanText(f.output)}` : '';
  if (f.status === 'failed') {
    return [`${paint(style.color, '31;1', 'failed   ')}${input}: ${cleanText(f.error?.message ?? 'failed')} [${cleanText(f.error?.code ?? 'internal')}]`];
  }
  const done = f.primitives.filter((p) => p.action !== 'skipped');
  const tag = f.gates.length
    ? paint(style.color, '31;1', 'gated    ')
    : f.status === 'unchecked'
      ? paint(style.color, '33;1', 'unchecked ')
      : fileWeight(f) > 0 ? paint(style.color, '33;1', 'findings ') : paint(style.color, '32', 'ok       ');
  const head = `${tag}${input}${target}`;
  const lines = [f.gates.length ? `${head}  ${paint(style.color, '31', `[${f.gates.join(', ')}]`)}` : head];
  if (f.status === 'unchecked') lines.push(`         nothing could be checked: ${done.length} of ${f.primitives.length} primitives checked`);
  for (const g of f.gateFigures ?? []) {
    if (g.tripped && f.gates.includes(g.gate)) lines.push(`         ${paint(style.color, '31', gateLine(g))}`);
  }
  for (const w of f.waived ?? []) {
    const g = (f.gateFigures ?? []).find((x) => x.gate === w.gate);
    lines.push(`         waived: ${g ? gateLine(g) : w.gate} (${cleanText(w.reason)})`);
  }
  const rows = primitivesWorstFirst(done);
  if (rows.length) {
    lines.push(...table(rows.slice(0, SUMMARY_PRIMITIVE_ROWS).map(primitiveCells), f, style, '         '));
    if (rows.length > SUMMARY_PRIMITIVE_ROWS) lines.push(`         ... ${n(rows.length - SUMMARY_PRIMITIVE_ROWS)} more primitives (full list in --report / --html)`);
  }
  const skipped = skippedLine(f);
  if (skipped) lines.push(`         ${skipped}`);
  const notes = notesText(f);
  if (notes) lines.push(`         notes: ${notes}`);
  const size = sizeChangeText(f);
  if (size) lines.push(`         ${size}`);
  for (const w of f.warnings) lines.push(`         warning: ${cleanText(w)}`);
  for (const note of f.notes ?? []) lines.push(`         note: ${cleanText(note)}`);
  return lines;
}

function cleanLine(f: FileReport, style: SummaryStyle): string {
  if (f.status === 'up-to-date') return `${paint(style.color, '32', 'up-to-date ')}${f.input}${f.output ? ` -> ${f.output}` : ''}`;
  const done = f.primitives.filter((p) => p.action !== 'skipped');
  const tri = done.reduce((a, p) => a + p.triangles, 0);
  const target = f.output ? ` -> ${cleanText(f.output)}` : '';
  const notes = (f.notes ?? []).map((note) => `, ${cleanText(note)}`).join('');
  const layout = notesText(f);
  const skipped = skippedLine(f);
  const waived = (f.waived ?? []).map((w) => `, waived ${w.gate} (${cleanText(w.reason)})`).join('');
  const warnings = warningTotal(f.warnings);
  const size = sizeChangeText(f);
  const extra = `${layout ? `; notes: ${layout}` : ''}${skipped ? `; ${skipped}` : ''}${size ? `; ${size}` : ''}${waived}` +
    `${warnings ? `, ${n(warnings)} warning${warnings === 1 ? '' : 's'}` : ''}${notes}`;
  return `${paint(style.color, '32', 'ok       ')}${cleanText(f.input)}${target}  (${done.length} of ${f.primitives.length} primitives, ${n(tri)} triangles, no findings${extra})`;
}

/** Files worst first: by severity, then by findings, then by name. */
export function filesWorstFirst(files: FileReport[]): FileReport[] {
  return [...files].sort(
    (a, b) => severity(b) - severity(a) || fileWeight(b) - fileWeight(a) || (a.input < b.input ? -1 : a.input > b.input ? 1 : 0),
  );
}

/** Primitives worst first: by findings, then mesh and primitive index. */
export function primitivesWorstFirst(primitives: PrimitiveReport[]): PrimitiveReport[] {
  return [...primitives].sort((a, b) => primitiveWeight(b) - primitiveWeight(a) || a.mesh - b.mesh || a.primitive - b.primitive);
}

/** Renders the summary of `report` as text (ends with a newline). */
export function renderSummary(report: Report, style: SummaryStyle): string {
  const files = filesWorstFirst(report.files);
  const s = report.summary;
  const lines = [`tanframe ${report.command} (${report.method}): ${n(s.files)} file${s.files === 1 ? '' : 's'}`];
  let clean = 0;
  for (const f of files) {
    if (severity(f) === 0) {
      clean++;
      if (clean <= SUMMARY_CLEAN_FILES) lines.push(cleanLine(f, style));
      continue;
    }
    lines.push(...fileBlock(f, style));
  }
  if (clean > SUMMARY_CLEAN_FILES) lines.push(`         ... ${n(clean - SUMMARY_CLEAN_FILES)} more files without findings`);
  const gated = s.gated ?? report.files.filter((f) => f.gates.length > 0).length;
  const counts = [
    `${n(s.clean ?? 0)} clean`,
    `${n(s.withFindings ?? 0)} with findings`,
    `${n(gated)} gated`,
    `${n(s.unchecked ?? 0)} unchecked`,
    `${n(s.upToDate ?? 0)} up-to-date`,
    `${n(s.failed)} failed`,
  ];
  if (s.skipped) counts.push(`${n(s.skipped)} skipped`);
  const totals = [
    `${n(s.files)} file${s.files === 1 ? '' : 's'}: ${counts.join(', ')}`,
    `${n(s.triangles)} triangles`,
    `${n(s.degenerateUv)} degenerate UV`,
    `${s.seconds.toFixed(2)} s`,
  ];
  lines.push(`total: ${totals.join(' | ')}`);
  if (s.gatesTripped.length) lines.push(paint(style.color, '31;1', `gates tripped: ${s.gatesTripped.join(', ')}`));
  return lines.join('\n') + '\n';
}
