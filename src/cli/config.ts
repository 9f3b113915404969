/**
 * Finding and reading `tanframe.config.json` (DESIGN.md, Config), and merging it with the
 * command line: the command line wins, the config's top level and matching overrides give the
 * rest, per file.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { TanframeError } from '../mesh/errors.js';
import { CONFIG_FILE_NAME, checkConfig, matchesGlobs, settingsFor, topSettings, waiversFor, type Config, type ConfigSettings } from '../lib/config.js';
import { defaultProcessOptions, type GateLimit, type GateName, type ProcessOptions } from '../lib/options.js';
import { formatLimit, parseLimit } from '../lib/gates.js';

/**
 * The config file to read: `--config <file>` (resolved against `cwd`), none with
 * `--no-config` (o.config === false), else the nearest tanframe.config.json in `cwd` or its
 * parents, stopping at the folder that holds `.git` (or the file-system root). Null: none.
 */
export function findConfigFile(o: Record<string, any>, cwd: string): string | null {
  if (o.config === false) return null;
  if (typeof o.config === 'string') return path.resolve(cwd, o.config);
  let dir = path.resolve(cwd);
  for (;;) {
    const candidate = path.join(dir, CONFIG_FILE_NAME);
    if (fs.existsSync(candidate)) return candidate;
    if (fs.existsSync(path.join(dir, '.git'))) return null;
    const up = path.dirname(dir);
    if (up === dir) return null;
    dir = up;
  }
}

/**
 * Reads and checks the config file (absolute `file`; messages name it relative to `cwd`); a
 * missing, unreadable or malformed file is 'bad-config'.
 */
export function readConfig(file: string, cwd: string): Config {
  const shown = path.relative(cwd, file) || file;
  let text: string;
  try {
    text = fs.readFileSync(file, 'utf8');
  } catch (err) {
    throw new TanframeError('bad-config', `cannot read the config file ${shown}: ${(err as NodeJS.ErrnoException).code ?? (err as Error).message}`);
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (err) {
    throw new TanframeError('bad-config', `${shown}: not valid JSON: ${oneLine((err as Error).message)}`);
  }
  return checkConfig(json, file, shown);
}

function oneLine(s: string): string {
  return s.replace(/\s+/g, ' ').slice(0, 300);
}

/** The command line's own settings: only the options the user gave (undefined ones are not given). */
function commandLineSettings(o: Record<string, any>): ConfigSettings {
  const s: ConfigSettings = {};
  if (o.method !== undefined) s.method = o.method;
  if (o.weight !== undefined) s.weight = o.weight;
  if (o.uv !== undefined) s.uv = o.uv;
  if (o.allPrimitives !== undefined) s.allPrimitives = o.allPrimitives;
  if (o.failOn !== undefined) s.failOn = o.failOn;
  if (o.tolerance !== undefined) s.tolerance = o.tolerance;
  if (o.uvEpsilon !== undefined) s.uvEpsilon = o.uvEpsilon;
  const limits: Partial<Record<GateName, GateLimit>> = {};
  if (o.maxDegenerateUv !== undefined) limits['degenerate-uv'] = { count: o.maxDegenerateUv };
  for (const spec of (o.limit as string[] | undefined) ?? []) {
    const { gate, limit } = parseLimit(spec);
    limits[gate] = limit;
  }
  if (Object.keys(limits).length > 0) s.limits = limits;
  return s;
}

/** `base` with `over`'s settings on top (limits merged gate by gate). */
function layer(base: ConfigSettings, over: ConfigSettings): ConfigSettings {
  const out: ConfigSettings = { ...base };
  for (const [k, v] of Object.entries(over)) {
    if (v === undefined) continue;
    if (k === 'limits') out.limits = { ...(base.limits ?? {}), ...(v as ConfigSettings['limits']) };
    else (out as Record<string, unknown>)[k] = v;
  }
  return out;
}

/** ProcessOptions from resolved settings (defaults for what none gives). */
function toOptions(s: ConfigSettings, o: Record<string, any>): ProcessOptions {
  const p = defaultProcessOptions();
  if (s.method) p.method = s.method;
  if (s.weight) p.weight = s.weight;
  p.uv = s.uv ?? null;
  p.allPrimitives = !!s.allPrimitives;
  p.failOn = s.failOn ?? [];
  p.limits = s.limits ?? {};
  if (s.tolerance !== undefined) p.tolerance = s.tolerance;
  if (s.uvEpsilon !== undefined) p.uvEpsilon = s.uvEpsilon;
  if (o.maxTriangles !== undefined) p.maxTriangles = o.maxTriangles;
  return p;
}

/** What a run takes from the command line and the config file together. */
export interface ResolvedSettings {
  /** The config file read, or null. */
  config: Config | null;
  /** Options for files no override matches (and for the report's `options`). */
  options: ProcessOptions;
  /** The parsed command-line options with the resolved run-wide settings filled in (for the report). */
  o: Record<string, any>;
  /** Per input file: its options (overrides applied, command line winning) and waivers. */
  forFile(file: string): { options: ProcessOptions; waivers: { gate: string; reason: string }[] };
  /** Whether the config's `exclude` leaves this discovered file out. */
  excluded(file: string): boolean;
}

/**
 * Resolves the run's settings: reads the config (findConfigFile), and layers defaults, the
 * config's top level, matching overrides (per file) and the command line, which wins.
 * Throws TanframeError 'bad-config' (exit 2) for a bad config, 'usage' for a bad --limit.
 */
export function resolveSettings(o: Record<string, any>, cwd: string): ResolvedSettings {
  const file = findConfigFile(o, cwd);
  const config = file ? readConfig(file, cwd) : null;
  const cli = commandLineSettings(o);
  const top = layer(config ? topSettings(config) : {}, cli);
  const options = toOptions(top, o);
  const merged: Record<string, any> = { ...o };
  merged.method = options.method;
  merged.weight = options.weight;
  if (options.uv !== null) merged.uv = options.uv;
  merged.allPrimitives = options.allPrimitives;
  merged.failOn = options.failOn;
  merged.tolerance = options.tolerance;
  if (top.uvEpsilon !== undefined) merged.uvEpsilon = top.uvEpsilon;
  delete merged.limit;
  delete merged.maxDegenerateUv;
  const limits = Object.entries(options.limits).map(([g, l]) => [g, formatLimit(l as GateLimit)]);
  if (limits.length > 0) merged.limits = Object.fromEntries(limits);
  if (config) merged.config = path.relative(cwd, config.file) || config.file;
  else delete merged.config;
  return {
    config,
    options,
    o: merged,
    forFile(f: string) {
      if (!config) return { options, waivers: [] };
      return { options: toOptions(layer(settingsFor(config, f), cli), o), waivers: waiversFor(config, f) };
    },
    excluded(f: string) {
      return config !== null && config.exclude.length > 0 && matchesGlobs(config, config.exclude, f);
    },
  };
}

/**
 * A job's own options and waivers from the config (nothing without a config file, so jobs
 * then run with the batch's options).
 */
export function perFile(settings: ResolvedSettings, file: string): { options?: ProcessOptions; waivers?: { gate: string; reason: string }[] } {
  if (!settings.config) return {};
  return settings.forFile(file);
}

/** Whether `file` (absolute) is one of the inputs as named, not found by a folder walk or a glob. */
export function namedExplicitly(inputs: string[], file: string, cwd: string): boolean {
  return inputs.some((i) => path.resolve(cwd, i) === file);
}
