/**
 * Based on: GitHub Actions' workflow commands as GitHub documents them
 * (`::error file=<path>,title=<title>::<message>`, one per line on stdout) and the escaping
 * the Actions toolkit applies (from memory: in the message `%` `\r` `\n` become `%25` `%0D`
 * `%0A`; in a property value `:` and `,` also become `%3A` and `%2C`).
 * `--annotate github`: one error annotation per tripped gate of each file and one per file
 * that failed, with `file=` the input path as the report names it. Strings from files and
 * file names pass the sanitiser (cleanText) first, so no control character reaches the log.
 */
import { cleanText } from '../mesh/text.js';
import { gateDetails } from './junit.js';
import type { FileReport, Report } from './types.js';

/** Escapes a workflow command's message: `%`, CR and LF. */
export function escapeCommandData(s: string): string {
  return s.replace(/%/g, '%25').replace(/\r/g, '%0D').replace(/\n/g, '%0A');
}

/** Escapes a workflow command's property value: as the message, plus `:` and `,`. */
export function escapeCommandProperty(s: string): string {
  return escapeCommandData(s).replace(/:/g, '%3A').replace(/,/g, '%2C');
}

/** One `::error` command with its properties in the given order. */
export function errorCommand(properties: [string, string][], message: string): string {
  const props = properties.map(([k, v]) => `${k}=${escapeCommandProperty(v)}`).join(',');
  return `::error ${props}::${escapeCommandData(message)}`;
}

/** The message of a tripped gate: what the file's primitives hold, one line each. */
function gateMessage(gate: string, f: FileReport): string {
  const lines = gateDetails(gate, f).map(cleanText);
  if (gate === 'unchecked' && lines.length === 0) return 'gates were asked for and no primitive of this file could be checked';
  if (lines.length === 0) return `the ${gate} gate tripped`;
  return lines.join('\n');
}

/**
 * The source line of the first listed triangle behind `gate` in `f` (the `lines` of OBJ
 * findings), or null: glTF input, no line known, or a gate with no triangles to point at.
 */
function gateLine(gate: string, f: FileReport): number | null {
  for (const p of f.primitives) {
    const st = p.storedTangents;
    const found = gate === 'degenerate-uv' ? p.degenerateUv : gate === 'degenerate-geometry' ? p.degenerateGeometry
      : gate === 'uv-overlap' ? p.uvOverlap : gate === 'invalid-values' ? p.invalidValues : gate === 'bad-normals' ? p.badNormals
        : gate === 'tangent-mismatch' ? (st?.mismatchedTriangles?.lines?.length ? st.mismatchedTriangles : st?.invalidVertices) : undefined;
    const line = found?.lines?.[0];
    if (line !== undefined) return line;
  }
  return null;
}

/**
 * The GitHub Actions annotations of `report`, one line each (ending with a newline), in report
 * order: for each file that failed, `tanframe: cannot process` with the error's code and
 * message; for each gate a file tripped, `tanframe: <gate>` with the primitives that trip it,
 * and for OBJ input `line=` the source line of the first listed triangle's face.
 * Empty when nothing failed and no gate tripped.
 */
export function renderGithubAnnotations(report: Report): string {
  const out: string[] = [];
  for (const f of report.files) {
    if (f.status === 'failed') {
      const code = f.error?.code ?? 'internal';
      out.push(errorCommand([['file', cleanText(f.input)], ['title', `tanframe: cannot process (${cleanText(code)})`]], cleanText(f.error?.message ?? 'failed')));
      continue;
    }
    for (const g of f.gates) {
      const line = gateLine(g, f);
      const props: [string, string][] = [['file', cleanText(f.input)]];
      if (line !== null) props.push(['line', String(line)]);
      props.push(['title', `tanframe: ${cleanText(g)}`]);
      out.push(errorCommand(props, `gate ${cleanText(g)} tripped\n${gateMessage(g, f)}`));
    }
  }
  return out.length ? out.join('\n') + '\n' : '';
}
