/**
 * Merges JSON reports ("tanframe-report/1"), typically the shards of one run (`--shard k/n`
 * on several CI runners), into the report the whole run would have written: the files of
 * every part sorted by input path, the gates evaluated again from each file's data and the
 * run's options, and the summary recomputed.
 */
import { TanframeError } from '../mesh/errors.js';
import { buildReport } from '../report/json.js';
import type { FileReport, Report } from '../report/types.js';
import { parseLimitValue } from './gates.js';
import type { GateLimit, GateName, ProcessOptions } from './options.js';
import { applyGates } from './processFile.js';

/** One report to merge and the name it is known by (its file name, for messages). */
export interface NamedReport {
  name: string;
  report: Report;
}

/** Option keys that may differ between the parts of one run (they say which part it was). */
export const PER_PART_OPTIONS = ['shard'];

/** JSON text of `value` with object keys sorted, so equal options compare equal. */
function canonical(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(canonical).join(',')}]`;
  if (value !== null && typeof value === 'object') {
    const o = value as Record<string, unknown>;
    return `{${Object.keys(o).sort().map((k) => `${JSON.stringify(k)}:${canonical(o[k])}`).join(',')}}`;
  }
  return JSON.stringify(value) ?? 'null';
}

function shown(value: unknown): string {
  return value === undefined ? '(not set)' : canonical(value);
}

/**
 * Checks that `value` has the shape of a report this function can merge (schema name, tool,
 * method, options, files); throws TanframeError 'usage' naming the report otherwise.
 */
export function checkReportShape(value: unknown, name: string): Report {
  const r = value as Partial<Report> | null;
  if (r === null || typeof r !== 'object' || Array.isArray(r)) throw new TanframeError('usage', `${name}: not a tanframe report (not a JSON object)`);
  if (r.schema !== 'tanframe-report/1') throw new TanframeError('usage', `${name}: not a tanframe report (schema ${shown(r.schema)}, expected "tanframe-report/1")`);
  if (!r.tool || typeof r.tool.version !== 'string') throw new TanframeError('usage', `${name}: the report has no tool version`);
  if (typeof r.method !== 'string') throw new TanframeError('usage', `${name}: the report has no method`);
  if (!r.options || typeof r.options !== 'object') throw new TanframeError('usage', `${name}: the report has no options`);
  if (!Array.isArray(r.files) || r.files.some((f) => !f || typeof f.input !== 'string' || !Array.isArray(f.primitives))) {
    throw new TanframeError('usage', `${name}: the report's files are not a list of file reports`);
  }
  return r as Report;
}

/** The options of a report without the per-part keys. */
export function runOptions(report: Report): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const k of Object.keys(report.options)) if (!PER_PART_OPTIONS.includes(k)) out[k] = report.options[k];
  return out;
}

/**
 * Throws TanframeError 'usage' naming the first difference between `part` and `first` that
 * keeps them from being parts of one run: tool version, command, method, or an option (all
 * but PER_PART_OPTIONS), or shards of different counts.
 */
function checkSameRun(first: NamedReport, part: NamedReport): void {
  const a = first.report, b = part.report;
  const differ = (what: string, x: unknown, y: unknown) =>
    new TanframeError('usage', `${part.name} and ${first.name} are not parts of one run: ${what} ${shown(y)} in ${part.name}, ${shown(x)} in ${first.name}`);
  if (a.tool.version !== b.tool.version) throw differ('tool version', a.tool.version, b.tool.version);
  if ((a.command ?? null) !== (b.command ?? null)) throw differ('command', a.command, b.command);
  if (a.method !== b.method) throw differ('method', a.method, b.method);
  const oa = runOptions(a), ob = runOptions(b);
  const keys = [...new Set([...Object.keys(oa), ...Object.keys(ob)])].sort();
  for (const k of keys) if (canonical(oa[k]) !== canonical(ob[k])) throw differ(`option ${k}`, oa[k], ob[k]);
  const sa = a.options.shard as { n?: number } | undefined, sb = b.options.shard as { n?: number } | undefined;
  if (sa && sb && sa.n !== sb.n) throw differ('shard count', sa.n, sb.n);
}

/** Report files in input order (by input path), whatever order the parts came in. */
export function sortFiles(files: FileReport[]): FileReport[] {
  return [...files].sort((a, b) => (a.input < b.input ? -1 : a.input > b.input ? 1 : 0));
}

/**
 * A merged file with its gates evaluated again (applyGates, as a run does): for a file that
 * was processed (status 'ok' or 'unchecked'), each gate it was judged by (its `gateFigures`:
 * the gates asked for that file and the limits in force for it, config overrides included;
 * else `options`) against its primitives, less the gates a waiver let through (its `waived`,
 * with their reasons). A failed, skipped or up-to-date file keeps what its report says.
 */
export function regateFile(f: FileReport, options: ProcessOptions): FileReport {
  if (f.status !== 'ok' && f.status !== 'unchecked') return f;
  let own = options;
  if (f.gateFigures) {
    const limits: Partial<Record<GateName, GateLimit>> = {};
    for (const g of f.gateFigures) if (g.gate !== 'unchecked') limits[g.gate as GateName] = parseLimitValue(g.limit, `${f.input}: gate ${g.gate}`);
    own = { ...options, failOn: f.gateFigures.map((g) => g.gate as GateName), limits };
  }
  const out: FileReport = { ...f, status: 'ok' };
  applyGates(out, own, f.waived ?? []);
  return out;
}

/**
 * Merges `parts` (at least one) into one report. The parts must come from one run: the same
 * tool version, command, method and options (except which shard), else TanframeError 'usage'
 * naming the difference. A file may be in one part only, except a failed input that every
 * part reports the same way (an input that named nothing fails in every shard): it is kept
 * once. `options` are the run's options as ProcessOptions (the caller translates
 * `parts[0].report.options`); the gates are evaluated again with them. The merged report has
 * the options without `shard`, the files sorted by input path, a recomputed summary, and as
 * its time the longest part's (shards run side by side).
 */
export function mergeReports(parts: NamedReport[], options: ProcessOptions): Report {
  if (parts.length === 0) throw new TanframeError('usage', 'name at least one JSON report to merge');
  const first = parts[0];
  for (const p of parts.slice(1)) checkSameRun(first, p);
  const byInput = new Map<string, { file: FileReport; from: string }>();
  const files: FileReport[] = [];
  let seconds = 0;
  for (const p of parts) {
    seconds = Math.max(seconds, Number(p.report.summary?.seconds) || 0);
    for (const f of p.report.files) {
      const seen = byInput.get(f.input);
      if (seen) {
        const sameFailure = f.status === 'failed' && seen.file.status === 'failed' && canonical(f.error) === canonical(seen.file.error);
        if (sameFailure) continue;
        throw new TanframeError('usage', `${f.input} is in both ${seen.from} and ${p.name}: merge the parts of one run only once each`);
      }
      byInput.set(f.input, { file: f, from: p.name });
      files.push(regateFile(f, options));
    }
  }
  const a = first.report;
  return buildReport(a.command, a.tool.version, a.method, runOptions(a), sortFiles(files), seconds);
}
