/**
 * What `bake` and `audit` share once they run: parsed options into ProcessOptions, shards, the
 * exit status and the report's output (the option definitions themselves are in options.ts,
 * loaded before any command runs).
 */
import * as path from 'node:path';
import { TanframeError } from '../mesh/errors.js';
import { cleanText, jsonText } from '../mesh/text.js';
import { defaultProcessOptions, type ProcessOptions } from '../lib/options.js';
import { parseLimit } from '../lib/gates.js';
import { writeFilesAtomic } from '../io/files.js';
import type { FileReport, Report } from '../report/types.js';
import { renderSummary } from '../report/summary.js';
import { renderGithubAnnotations } from '../report/annotations.js';
import type { CliIo } from './options.js';

export { addSharedOptions, annotateOption, DEFAULT_FILE_TIMEOUT_S, toolVersion, type CliIo } from './options.js';

/**
 * Refuses option pairs that cannot both hold, before anything is processed: --annotate
 * prints on stdout, where --json puts the report (use --report <file> with --annotate).
 */
export function checkOutputOptions(o: Record<string, any>): void {
  if (o.annotate && o.json) throw new TanframeError('usage', '--annotate prints on stdout, where --json puts the report: use --report <file> with --annotate');
}

/**
 * Translates parsed shared options into ProcessOptions, ignoring any config file (the
 * commands use resolveSettings in config.ts, which layers the config under these).
 */
export function toProcessOptions(o: Record<string, any>): ProcessOptions {
  const p = defaultProcessOptions();
  p.method = o.method ?? p.method;
  p.weight = o.weight ?? p.weight;
  p.uv = o.uv ?? null;
  p.allPrimitives = !!o.allPrimitives;
  p.failOn = o.failOn ?? [];
  if (o.maxDegenerateUv !== undefined) p.limits['degenerate-uv'] = { count: o.maxDegenerateUv };
  for (const spec of (o.limit as string[] | undefined) ?? []) {
    const { gate, limit } = parseLimit(spec);
    p.limits[gate] = limit;
  }
  p.tolerance = o.tolerance ?? p.tolerance;
  if (o.uvEpsilon !== undefined) p.uvEpsilon = o.uvEpsilon;
  if (o.maxTriangles !== undefined) p.maxTriangles = o.maxTriangles;
  return p;
}

/** The shard of a sorted list: items whose position modulo n is k-1. */
export function shardOf<T>(items: T[], shard: { k: number; n: number } | undefined): T[] {
  if (!shard) return items;
  return items.filter((_, i) => i % shard.n === shard.k - 1);
}

/**
 * Exit status for a finished run (DESIGN.md): 3 if a file failed or a report, picture or
 * output could not be written (`writeFailures`), 1 if a gate tripped, else 0 (2, usage and
 * configuration errors, never gets this far).
 */
export function exitStatus(files: FileReport[], writeFailures = 0): number {
  if (writeFailures > 0 || files.some((f) => f.status === 'failed')) return 3;
  if (files.some((f) => f.gates.length > 0)) return 1;
  return 0;
}

/**
 * Prints failures (one line each, on stderr), then the summary or JSON, and writes --report
 * (to `planned`'s path, a named link's target, when the write plan settled one). Returns 1
 * when --report could not be written (told in one line on stderr), else 0.
 */
export async function emitReport(report: Report, o: Record<string, any>, io: CliIo, planned?: Map<string, string>): Promise<number> {
  for (const f of report.files) {
    if (f.status === 'failed') io.stderr(`tanframe: ${cleanText(f.input)}: ${cleanText(f.error?.message ?? 'failed')}\n`);
  }
  let failed = 0;
  if (o.report) {
    const target = planned?.get('--report') ?? path.resolve(io.cwd, o.report);
    try {
      await writeFilesAtomic([{ path: target, bytes: new TextEncoder().encode(jsonText(report) + '\n') }]);
    } catch (err) {
      io.stderr(`tanframe: --report ${cleanText(String(o.report))}: ${cleanText(String((err as Error)?.message ?? err).split('\n')[0]!)}\n`);
      failed = 1;
    }
  }
  if (o.json) io.stdout(jsonText(report) + '\n');
  else if (!o.quiet) io.stdout(renderSummary(report, { color: io.isTTY && !io.env.NO_COLOR }));
  if (o.annotate === 'github') io.stdout(renderGithubAnnotations(report));
  return failed;
}
