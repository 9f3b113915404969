/**
 * Based on: the HTML Living Standard (WHATWG) for a self-contained document (inline <style>,
 * inline <svg>). The report page of `--html`: the summary, an overview of every file, then a
 * section per file with findings (its primitives' table, first triangle indices, its view sheet
 * and UV pictures). No script, no external reference of any kind (images are data: URIs): it
 * opens from a CI artifact store offline.
 */
import { ADVICE, NOTES_ADVICE } from './advice.js';
import { filesWorstFirst, gateLine, notesText, primitivesWorstFirst, severity, skippedLine } from './summary.js';
import type { FileReport, PrimitiveReport, Report } from './types.js';
import { escapeXml } from './uvMapSvg.js';

/** One picture for the page: the SVG text, or why it was left out. */
export interface HtmlPicture {
  input: string;
  mesh: number;
  primitive: number;
  /** Inline SVG markup (from renderUvMapSvg), or null when `omitted` says why there is none. */
  svg: string | null;
  omitted?: string;
}

/** One file's view sheet for the page: PNG bytes (embedded as a data: URI), or why there is none. */
export interface HtmlView {
  input: string;
  png: Uint8Array | null;
  omitted?: string;
}

/** Base64 of bytes (RFC 4648, section 4), through the global btoa of browsers and Node.js. */
function base64(bytes: Uint8Array): string {
  let s = '';
  for (let i = 0; i < bytes.length; i += 0x8000) s += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(s);
}

/** Triangle indices listed per finding on the page. */
export const HTML_LISTED_TRIANGLES = 50;

/** Of those, the first ones shown with where they are (centroid, OBJ line). */
export const HTML_LOCATED_TRIANGLES = 8;

const h = escapeXml;

function n(x: number): string {
  return x.toLocaleString('en-US');
}

const CSS = `
:root { --ink: #23262b; --muted: #6a6f78; --paper: #fbfaf6; --line: #dedacd; --bad: #b3263a; --warn: #b86a12; --good: #2f7d4f; --accent: #2f6f78; }
* { box-sizing: border-box; }
body { margin: 0; font: 14px/1.45 system-ui, -apple-system, "Segoe UI", sans-serif; color: var(--ink); background: var(--paper); }
main { max-width: 1180px; margin: 0 auto; padding: 24px 28px 48px; }
h1 { font-size: 22px; margin: 0 0 4px; }
h2 { font-size: 16px; margin: 0; word-break: break-all; }
.meta { color: var(--muted); margin: 0 0 18px; }
.meta code { background: #efece2; padding: 1px 5px; border-radius: 3px; }
.verdict { padding: 10px 14px; border-radius: 6px; margin: 0 0 18px; font-weight: 600; }
.verdict.bad { background: #f8e3e5; color: var(--bad); }
.verdict.good { background: #e3f1e8; color: var(--good); }
.cards { display: grid; grid-template-columns: repeat(auto-fit, minmax(108px, 1fr)); gap: 10px; margin: 0 0 26px; }
.card { background: #fff; border: 1px solid var(--line); border-radius: 6px; padding: 10px 12px; }
.card .num { display: block; font-size: 22px; font-weight: 650; font-variant-numeric: tabular-nums; }
.card .label { color: var(--muted); font-size: 12px; }
.card.alert .num { color: var(--bad); }
table { border-collapse: collapse; width: 100%; background: #fff; border: 1px solid var(--line); font-variant-numeric: tabular-nums; }
th, td { padding: 5px 8px; border-bottom: 1px solid #ece9df; text-align: right; white-space: nowrap; }
th { background: #f3f1ea; font-weight: 600; font-size: 12px; color: #4a4f57; white-space: normal; vertical-align: bottom; }
th:first-child, td:first-child, td.text { text-align: left; }
td:first-child { white-space: normal; min-width: 9em; }
#overview td:first-child { word-break: break-all; }
.scroll { overflow-x: auto; }
td.text { white-space: normal; }
td.hit { color: var(--warn); font-weight: 600; }
td.gate { color: var(--bad); font-weight: 700; }
tr.skipped td { color: var(--muted); }
.pill { display: inline-block; padding: 1px 8px; border-radius: 10px; font-size: 12px; font-weight: 600; margin-left: 6px; }
.pill.failed, .pill.gated { background: var(--bad); color: #fff; }
.pill.findings { background: #f5dfc0; color: #7a4306; }
.pill.ok { background: #d4ebdc; color: var(--good); }
.pill.unchecked { background: #f5dfc0; color: #7a4306; }
.pill.up-to-date { background: #e6e4dc; color: var(--muted); }
.gates div, .waived div { margin: 2px 0; }
.gates { color: var(--bad); margin: 10px 0 0; }
.waived, .notes { color: #41464e; margin: 8px 0 0; font-size: 13px; }
.advice { margin: 10px 0 0; padding: 8px 12px; background: #f6f4ec; border-radius: 4px; font-size: 13px; }
.advice dt { font-weight: 600; }
.advice dd { margin: 0 0 6px; }
.pill.gate { background: #f8e3e5; color: var(--bad); }
section.file { margin: 28px 0 0; padding: 16px 18px; background: #fff; border: 1px solid var(--line); border-left: 5px solid var(--line); border-radius: 6px; }
section.file.sev-3, section.file.sev-2 { border-left-color: var(--bad); }
section.file.sev-1 { border-left-color: var(--warn); }
section.file .scroll { margin-top: 12px; }
.error { color: var(--bad); margin: 10px 0 0; }
.lists { margin: 10px 0 0; color: #41464e; font-size: 13px; }
.lists div { margin: 2px 0; word-break: break-word; }
.pictures { display: flex; flex-wrap: wrap; gap: 16px; margin-top: 14px; }
figure { margin: 0; }
figure svg { display: block; max-width: min(100%, 560px); height: auto; border: 1px solid var(--line); border-radius: 4px; }
figure.view { flex-basis: 100%; }
figure.view img { display: block; max-width: 100%; height: auto; border: 1px solid var(--line); border-radius: 4px; background: #fff; }
figcaption { color: var(--muted); font-size: 12px; margin-top: 4px; }
.note { color: var(--muted); font-size: 12px; }
a { color: var(--accent); }
`;

function statusOf(f: FileReport): 'failed' | 'gated' | 'unchecked' | 'findings' | 'ok' | 'up-to-date' {
  const s = severity(f);
  if (s === 3) return 'failed';
  if (s === 2) return 'gated';
  if (f.status === 'unchecked') return 'unchecked';
  if (s === 1) return 'findings';
  return f.status === 'up-to-date' ? 'up-to-date' : 'ok';
}

function card(key: string, label: string, value: string, alert: boolean): string {
  return `<div class="card${alert ? ' alert' : ''}" data-key="${key}"><span class="num">${h(value)}</span><span class="label">${h(label)}</span></div>`;
}

function stored(p: PrimitiveReport): string {
  const s = p.storedTangents;
  if (!s) return p.normalMapped ? 'missing' : '\u2013';
  const parts = [`mean ${s.meanAngleDeg.toFixed(3)}\u00b0, p95 ${s.p95AngleDeg.toFixed(3)}\u00b0, max ${s.maxAngleDeg.toFixed(2)}\u00b0`];
  if (s.mismatched) parts.push(`${n(s.mismatched)} of ${n(s.compared)} corners off`);
  if (s.signMismatch) parts.push(`${n(s.signMismatch)} sign`);
  if (s.invalid) parts.push(`${n(s.invalid)} invalid`);
  if (s.undefinedFrames) parts.push(`${n(s.undefinedFrames)} corners undefined (not compared)`);
  return parts.join('; ');
}

function cell(value: number, gate: string, f: FileReport): string {
  const cls = value > 0 ? (f.gates.includes(gate) ? ' class="gate"' : ' class="hit"') : '';
  return `<td${cls}>${n(value)}</td>`;
}

function primitiveRow(p: PrimitiveReport, f: FileReport): string {
  const name = `mesh ${p.mesh}${p.meshName ? ` \u201c${p.meshName}\u201d` : ''}, primitive ${p.primitive}`;
  if (p.action === 'skipped') {
    return `<tr class="skipped"><td>${h(name)}</td><td colspan="12" class="text">skipped: ${h(p.skipReason ?? 'skipped')}</td></tr>`;
  }
  const s = p.storedTangents;
  const storedBad = s !== null && (s.invalid > 0 || s.mismatched > 0 || s.signMismatch > 0);
  const storedCls = storedBad ? (f.gates.includes('tangent-mismatch') ? ' gate' : ' hit') : p.normalMapped && !s && f.gates.includes('missing-tangents') ? ' gate' : '';
  return (
    `<tr><td>${h(name)}</td><td>${n(p.triangles)}</td><td>${n(p.verticesIn)} \u2192 ${n(p.verticesOut)}</td>` +
    `<td>${n(p.splitVertices)}</td><td>${n(p.mirrorSeamSplits)}</td>` +
    cell(p.degenerateUv.count, 'degenerate-uv', f) + cell(p.degenerateGeometry.count, 'degenerate-geometry', f) +
    cell(p.invalidValues.count, 'invalid-values', f) + cell(p.badNormals.count, 'bad-normals', f) +
    cell(p.uvOverlap.count, 'uv-overlap', f) + `<td class="text${storedCls}">${h(stored(p))}</td>` +
    `<td class="note-cell">${n(p.mirroredTriangles)}</td><td class="note-cell">${n(p.stackedShells?.count ?? 0)}</td></tr>`
  );
}

/** Where a listed triangle is, as the page shows it: "(at x, y, z; line n)", 4 significant digits. */
function where(c: number[] | null | undefined, line: number | undefined): string {
  const parts: string[] = [];
  if (c) parts.push(`at ${c.map((x) => Number(x.toPrecision(4)).toString()).join(', ')}`);
  if (line !== undefined) parts.push(`line ${line}`);
  return parts.length ? ` (${parts.join('; ')})` : '';
}

function lists(f: FileReport): string {
  const out: string[] = [];
  for (const p of f.primitives) {
    if (p.action === 'skipped') continue;
    const add = (label: string, x: { count?: number; triangleCount?: number; triangles?: number[]; centroids?: (number[] | null)[]; lines?: number[] } | undefined, count: number) => {
      if (!x || !x.triangles || count === 0) return;
      // The first few with where they are (object-space centroid, OBJ line), then numbers only.
      const shown = x.triangles.slice(0, HTML_LISTED_TRIANGLES).map((t, k) => {
        return k >= HTML_LOCATED_TRIANGLES ? String(t) : `${t}${where(x.centroids?.[k], x.lines?.[k])}`;
      }).join(', ');
      const more = count > HTML_LISTED_TRIANGLES ? `, \u2026 (${n(count)} in all)` : '';
      out.push(`<div>mesh ${p.mesh} primitive ${p.primitive}, ${h(label)}: triangles ${h(shown)}${more}</div>`);
    };
    add('degenerate UV', p.degenerateUv, p.degenerateUv.count);
    add('degenerate geometry', p.degenerateGeometry, p.degenerateGeometry.count);
    add('UV overlap', p.uvOverlap, p.uvOverlap.count);
    add('invalid values (triangles using those vertices)', p.invalidValues, p.invalidValues.triangleCount ?? 0);
    add('bad normals (triangles using those vertices)', p.badNormals, p.badNormals.triangleCount ?? 0);
    const st = p.storedTangents;
    if (st?.mismatchedTriangles) add('stored tangents off', st.mismatchedTriangles, st.mismatchedTriangles.count);
    if (st?.invalidVertices) add('invalid stored tangents (triangles using those vertices)', st.invalidVertices, st.invalidVertices.triangleCount ?? 0);
  }
  return out.length ? `<div class="lists">${out.join('')}</div>` : '';
}

const HEAD_ROW =
  '<tr><th>primitive</th><th>triangles</th><th>vertices in \u2192 out</th><th>splits</th><th>mirror-seam splits</th>' +
  '<th>degenerate UV</th><th>degenerate geometry</th><th>invalid values</th><th>bad normals</th><th>UV overlap (partial)</th><th>stored tangents</th>' +
  '<th>note: mirrored</th><th>note: stacked shells</th></tr>';

/** The finding kinds a file shows, as gate names (for the advice lines). */
function kindsOf(f: FileReport): string[] {
  const kinds = new Set<string>(f.gates);
  for (const w of f.waived ?? []) kinds.add(w.gate);
  for (const p of f.primitives) {
    if (p.action === 'skipped') continue;
    if (p.degenerateUv.count) kinds.add('degenerate-uv');
    if (p.degenerateGeometry.count) kinds.add('degenerate-geometry');
    if (p.invalidValues.count) kinds.add('invalid-values');
    if (p.badNormals.count) kinds.add('bad-normals');
    if (p.uvOverlap.count) kinds.add('uv-overlap');
    const st = p.storedTangents;
    if (st && (st.invalid || st.mismatched)) kinds.add('tangent-mismatch');
  }
  if (f.status === 'unchecked') kinds.add('unchecked');
  return Object.keys(ADVICE).filter((k) => kinds.has(k));
}

/** Gate lines (count against limit), waived gates with reasons, notes, skip reasons and advice of one file. */
function fileDetails(f: FileReport): string {
  const out: string[] = [];
  const tripped = (f.gateFigures ?? []).filter((g) => g.tripped && f.gates.includes(g.gate));
  if (tripped.length) out.push(`<div class="gates" data-key="gate-lines">${tripped.map((g) => `<div>${h(gateLine(g))}</div>`).join('')}</div>`);
  if (f.waived?.length) {
    const lines = f.waived.map((w) => {
      const g = (f.gateFigures ?? []).find((x) => x.gate === w.gate);
      return `<div>waived: ${h(g ? gateLine(g) : w.gate)} \u2014 ${h(w.reason)}</div>`;
    });
    out.push(`<div class="waived" data-key="waived">${lines.join('')}</div>`);
  }
  const skipped = skippedLine(f);
  if (skipped) out.push(`<div class="notes" data-key="skipped">${h(skipped)}</div>`);
  const notes = notesText(f);
  if (notes) out.push(`<div class="notes" data-key="notes">notes (not problems): ${h(notes)}</div>`);
  const kinds = kindsOf(f);
  if (kinds.length) {
    out.push(`<dl class="advice" data-key="advice">${kinds.map((k) => `<dt>${h(k)}</dt><dd>${h(ADVICE[k])}</dd>`).join('')}</dl>`);
  }
  return out.join('\n');
}

function fileSection(f: FileReport, anchor: string, pictures: HtmlPicture[], view: HtmlView | undefined): string {
  const status = statusOf(f);
  const pills = [`<span class="pill ${status}">${status}</span>`, ...f.gates.map((g) => `<span class="pill gate">${h(g)}</span>`)];
  const parts = [`<section class="file sev-${severity(f)}" id="${anchor}" data-input="${h(f.input)}">`, `<h2>${h(f.input)}${pills.join('')}</h2>`];
  if (f.output) parts.push(`<div class="note">written to ${h(f.output)}</div>`);
  if (f.status === 'failed') {
    parts.push(`<p class="error">Could not be processed: ${h(f.error?.message ?? 'failed')} <code>[${h(f.error?.code ?? 'internal')}]</code></p>`);
  } else {
    const rows = primitivesWorstFirst(f.primitives.filter((p) => p.action !== 'skipped'))
      .concat(f.primitives.filter((p) => p.action === 'skipped'))
      .map((p) => primitiveRow(p, f));
    parts.push(fileDetails(f));
    parts.push(`<div class="scroll"><table><thead>${HEAD_ROW}</thead><tbody>${rows.join('')}</tbody></table></div>`);
    parts.push(lists(f));
  }
  for (const w of f.warnings) parts.push(`<div class="note">warning: ${h(w)}</div>`);
  for (const note of f.notes ?? []) parts.push(`<div class="note">note: ${h(note)}</div>`);
  if (pictures.length || view) {
    parts.push('<div class="pictures">');
    if (view?.png) {
      parts.push(
        `<figure class="view" data-view="${h(f.input)}"><img alt="${h(`Views of ${f.input}: shaded, tangent mismatch and findings`)}" src="data:image/png;base64,${base64(view.png)}">` +
          '<figcaption>the model from the front, right, back and left: shaded with the baked frames, tangent mismatch, findings</figcaption></figure>',
      );
    } else if (view) {
      parts.push(`<div class="note">view sheet left out (${h(view.omitted ?? 'not drawn')})</div>`);
    }
    for (const pic of pictures) {
      if (pic.svg) {
        parts.push(`<figure data-picture="m${pic.mesh}p${pic.primitive}">${pic.svg}<figcaption>UV layout, mesh ${pic.mesh} primitive ${pic.primitive}</figcaption></figure>`);
      } else {
        parts.push(`<div class="note">mesh ${pic.mesh} primitive ${pic.primitive}: picture left out (${h(pic.omitted ?? 'no picture')})</div>`);
      }
    }
    parts.push('</div>');
  }
  parts.push('</section>');
  return parts.join('\n');
}

/**
 * Renders the report page. `pictures` (UV pictures) and `views` (view sheets) are matched to
 * files by `input`; files are shown worst first. Same inputs, same text (no clock, no randomness).
 */
export function renderHtml(report: Report, pictures: HtmlPicture[], views: HtmlView[] = []): string {
  const s = report.summary;
  const files = filesWorstFirst(report.files);
  const gated = s.gated ?? report.files.filter((f) => f.gates.length > 0).length;
  const byInput = new Map<string, HtmlPicture[]>();
  for (const p of pictures) {
    const list = byInput.get(p.input) ?? [];
    list.push(p);
    byInput.set(p.input, list);
  }
  const options = Object.entries(report.options)
    .map(([k, v]) => `${k}=${Array.isArray(v) ? v.join(',') : typeof v === 'object' && v !== null ? JSON.stringify(v) : String(v)}`)
    .join(' ');
  const verdict = s.failed > 0 || s.gatesTripped.length
    ? `<div class="verdict bad" data-key="verdict">${s.failed > 0 ? `${n(s.failed)} file${s.failed === 1 ? '' : 's'} could not be processed. ` : ''}${s.gatesTripped.length ? `Gates tripped: ${h(s.gatesTripped.join(', '))}.` : ''}</div>`
    : '<div class="verdict good" data-key="verdict">No gate tripped; every file was processed.</div>';
  const cards = [
    card('files', 'files', n(s.files), false),
    card('ok', 'processed', n(s.ok), false),
    card('clean', 'clean', n(s.clean ?? 0), false),
    card('withFindings', 'with findings, no gate tripped', n(s.withFindings ?? 0), false),
    card('gated', 'files with a gate tripped', n(gated), gated > 0),
    card('unchecked', 'nothing could be checked', n(s.unchecked ?? 0), (s.unchecked ?? 0) > 0),
    card('upToDate', 'up to date', n(s.upToDate ?? 0), false),
    card('failed', 'could not be processed', n(s.failed), s.failed > 0),
    card('triangles', 'triangles', n(s.triangles), false),
    card('degenerateUv', 'degenerate UV triangles', n(s.degenerateUv), s.degenerateUv > 0),
    card('degenerateGeometry', 'degenerate geometry triangles', n(s.degenerateGeometry), s.degenerateGeometry > 0),
    card('invalidValues', 'vertices with invalid values', n(s.invalidValues), s.invalidValues > 0),
    card('mirroredTriangles', 'note: mirrored triangles', n(s.mirroredTriangles ?? 0), false),
    card('stackedShells', 'note: triangles in stacked UV shells', n(s.stackedShells ?? 0), false),
  ];
  const anchors = new Map<FileReport, string>();
  files.forEach((f, i) => anchors.set(f, `file-${i + 1}`));
  const overview = files.map((f) => {
    const done = f.primitives.filter((p) => p.action !== 'skipped');
    const sum = (g: (p: PrimitiveReport) => number) => done.reduce((a, p) => a + g(p), 0);
    const status = statusOf(f);
    const name = status === 'ok' ? h(f.input) : `<a href="#${anchors.get(f)}">${h(f.input)}</a>`;
    return (
      `<tr data-input="${h(f.input)}"><td>${name}</td><td class="text"><span class="pill ${status}">${status}</span></td>` +
      `<td>${n(sum((p) => p.triangles))}</td><td>${n(sum((p) => p.degenerateUv.count))}</td><td>${n(sum((p) => p.uvOverlap.count))}</td>` +
      `<td class="text">${h(f.gates.join(', ') || (f.error ? f.error.code : ''))}${f.waived?.length ? h(` (waived: ${f.waived.map((w) => w.gate).join(', ')})`) : ''}</td>` +
      `<td>${n(sum((p) => p.mirroredTriangles))}</td><td>${n(sum((p) => p.stackedShells?.count ?? 0))}</td></tr>`
    );
  });
  const viewOf = new Map<string, HtmlView>();
  for (const v of views) viewOf.set(v.input, v);
  const sections = files.filter((f) => severity(f) > 0).map((f) => fileSection(f, anchors.get(f)!, byInput.get(f.input) ?? [], viewOf.get(f.input)));
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>tanframe ${h(report.command)} report</title>
<style>${CSS}</style>
</head>
<body>
<main>
<h1>tanframe ${h(report.command)} report</h1>
<p class="meta">tanframe ${h(report.tool.version)} \u00b7 method <code>${h(report.method)}</code>${options ? ` \u00b7 <code>${h(options)}</code>` : ''} \u00b7 ${s.seconds.toFixed(2)} s</p>
${verdict}
<div class="cards" id="summary">
${cards.join('\n')}
</div>
<div class="scroll"><table id="overview"><thead><tr><th>file</th><th>status</th><th>triangles</th><th>degenerate UV</th><th>UV overlap (partial)</th><th>gates / error</th><th>note: mirrored</th><th>note: stacked shells</th></tr></thead>
<tbody>
${overview.join('\n')}
</tbody></table></div>
${sections.join('\n')}
<p class="note" style="margin-top:28px">${h(NOTES_ADVICE)}</p>
<p class="note">Triangle numbers are positions in each primitive's triangle list (strips and fans expanded); "at x, y, z" is a triangle's centroid in object space (before node transforms). UV pictures show u to the right and v downward, as in the texture image.</p>
</main>
</body>
</html>
`;
}
