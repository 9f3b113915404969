/**
 * Based on: the config file of DESIGN.md ("Config", `tanframe.config.json`, schema
 * "tanframe-config/1"). Checks a parsed config, and resolves the settings of one input file:
 * defaults, then the file's top-level settings, then each matching override in order, then the
 * command line. Globs (picomatch) are relative to the config file's folder. Pure: the caller
 * reads the file.
 */
import * as path from 'node:path';
import picomatch from 'picomatch';
import { TanframeError } from '../mesh/errors.js';
import { checkGateName, parseLimitValue } from './gates.js';
import { GATE_NAMES, type GateLimit, type GateName } from './options.js';

/** The schema name a config file declares. */
export const CONFIG_SCHEMA = 'tanframe-config/1';

/** The config file's name, looked for in the current folder and its parents. */
export const CONFIG_FILE_NAME = 'tanframe.config.json';

/** Settings a config may give for all files (top level) or some (an override). */
export interface ConfigSettings {
  method?: 'mikktspace' | 'lengyel';
  weight?: 'derivative' | 'angle' | 'area' | 'uniform';
  uv?: number;
  allPrimitives?: boolean;
  failOn?: GateName[];
  limits?: Partial<Record<GateName, GateLimit>>;
  tolerance?: number;
  uvEpsilon?: number;
}

/** A checked config file. */
export interface Config extends ConfigSettings {
  /** Absolute path of the file; globs are relative to its folder. */
  file: string;
  exclude: string[];
  overrides: (ConfigSettings & { files: string[] })[];
  waivers: { files: string[]; gates: GateName[]; reason: string }[];
}

const SETTING_KEYS = ['method', 'weight', 'uv', 'allPrimitives', 'failOn', 'limits', 'tolerance', 'uvEpsilon'] as const;
const TOP_KEYS = ['schema', ...SETTING_KEYS, 'exclude', 'overrides', 'waivers'];

function fail(file: string, key: string, why: string): never {
  throw new TanframeError('bad-config', `${file}: ${key}: ${why}`);
}

function isObject(x: unknown): x is Record<string, unknown> {
  return typeof x === 'object' && x !== null && !Array.isArray(x);
}

function stringList(file: string, key: string, x: unknown, nonEmpty: boolean): string[] {
  if (!Array.isArray(x) || x.some((s) => typeof s !== 'string' || s === '')) fail(file, key, 'expected a list of non-empty strings');
  if (nonEmpty && x.length === 0) fail(file, key, 'expected at least one entry');
  return x as string[];
}

function gateList(file: string, key: string, x: unknown): GateName[] {
  const list = stringList(file, key, x, false);
  for (const g of list) {
    if (!(GATE_NAMES as readonly string[]).includes(g)) fail(file, key, `unknown gate '${g}' (gates: ${GATE_NAMES.join(', ')})`);
  }
  if (new Set(list).size !== list.length) fail(file, key, 'a gate is named twice');
  return list as GateName[];
}

/** Checks the settings keys of `o` (top level or an override) into `out`; `where` prefixes key names. */
function settings(file: string, where: string, o: Record<string, unknown>, out: ConfigSettings): void {
  const key = (k: string) => `${where}${k}`;
  if (o.method !== undefined) {
    if (o.method !== 'mikktspace' && o.method !== 'lengyel') fail(file, key('method'), "expected 'mikktspace' or 'lengyel'");
    out.method = o.method;
  }
  if (o.weight !== undefined) {
    if (!['derivative', 'angle', 'area', 'uniform'].includes(o.weight as string)) fail(file, key('weight'), "expected 'derivative', 'angle', 'area' or 'uniform'");
    out.weight = o.weight as ConfigSettings['weight'];
  }
  if (o.uv !== undefined) {
    if (typeof o.uv !== 'number' || !Number.isInteger(o.uv) || o.uv < 0) fail(file, key('uv'), 'expected an integer >= 0');
    out.uv = o.uv;
  }
  if (o.allPrimitives !== undefined) {
    if (typeof o.allPrimitives !== 'boolean') fail(file, key('allPrimitives'), 'expected true or false');
    out.allPrimitives = o.allPrimitives;
  }
  if (o.failOn !== undefined) out.failOn = gateList(file, key('failOn'), o.failOn);
  if (o.limits !== undefined) {
    if (!isObject(o.limits)) fail(file, key('limits'), 'expected an object of gate: count or "p%"');
    const limits: Partial<Record<GateName, GateLimit>> = {};
    for (const [g, v] of Object.entries(o.limits)) {
      const k = key(`limits.${g}`);
      let gate: GateName;
      try {
        gate = checkGateName(g, k);
      } catch (err) {
        fail(file, k, (err as Error).message.replace(`${k}: `, ''));
      }
      if (typeof v !== 'number' && typeof v !== 'string') fail(file, k, 'expected a count (an integer >= 0) or a percentage such as "0.5%"');
      try {
        limits[gate] = parseLimitValue(v, k);
      } catch (err) {
        fail(file, k, (err as Error).message.replace(`${k}: `, ''));
      }
    }
    out.limits = limits;
  }
  if (o.tolerance !== undefined) {
    if (typeof o.tolerance !== 'number' || !(o.tolerance >= 0 && o.tolerance <= 180)) fail(file, key('tolerance'), 'expected degrees in [0, 180]');
    out.tolerance = o.tolerance;
  }
  if (o.uvEpsilon !== undefined) {
    if (typeof o.uvEpsilon !== 'number' || !(o.uvEpsilon >= 0 && o.uvEpsilon <= 1)) fail(file, key('uvEpsilon'), 'expected a number in [0, 1]');
    out.uvEpsilon = o.uvEpsilon;
  }
}

function unknownKeys(file: string, where: string, o: Record<string, unknown>, allowed: readonly string[]): void {
  for (const k of Object.keys(o)) if (!allowed.includes(k)) fail(file, `${where}${k}`, 'unknown key');
}

/**
 * Checks a parsed config file (`json`, read from absolute path `file`, named `shownAs` in
 * messages). Returns the config; throws TanframeError 'bad-config' naming the file and the key for an unknown key or a bad
 * value (DESIGN.md: a configuration error, exit 2).
 */
export function checkConfig(json: unknown, file: string, shownAs: string = file): Config {
  const name = shownAs;
  if (!isObject(json)) fail(name, '(top level)', 'expected a JSON object');
  unknownKeys(name, '', json, TOP_KEYS);
  if (json.schema === undefined) fail(name, 'schema', `missing (expected "${CONFIG_SCHEMA}")`);
  if (json.schema !== CONFIG_SCHEMA) fail(name, 'schema', `expected "${CONFIG_SCHEMA}"`);
  const config: Config = { file, exclude: [], overrides: [], waivers: [] };
  settings(name, '', json, config);
  if (json.exclude !== undefined) config.exclude = stringList(name, 'exclude', json.exclude, true);
  if (json.overrides !== undefined) {
    if (!Array.isArray(json.overrides)) fail(name, 'overrides', 'expected a list of { files, ...settings }');
    json.overrides.forEach((o: unknown, i: number) => {
      const where = `overrides[${i}].`;
      if (!isObject(o)) fail(name, `overrides[${i}]`, 'expected an object');
      unknownKeys(name, where, o, ['files', ...SETTING_KEYS]);
      if (o.files === undefined) fail(name, `${where}files`, 'missing');
      const entry: ConfigSettings & { files: string[] } = { files: stringList(name, `${where}files`, o.files, true) };
      settings(name, where, o, entry);
      config.overrides.push(entry);
    });
  }
  if (json.waivers !== undefined) {
    if (!Array.isArray(json.waivers)) fail(name, 'waivers', 'expected a list of { files, gates, reason }');
    json.waivers.forEach((w: unknown, i: number) => {
      const where = `waivers[${i}].`;
      if (!isObject(w)) fail(name, `waivers[${i}]`, 'expected an object');
      unknownKeys(name, where, w, ['files', 'gates', 'reason']);
      for (const k of ['files', 'gates', 'reason']) if (w[k] === undefined) fail(name, `${where}${k}`, 'missing');
      const files = stringList(name, `${where}files`, w.files, true);
      const gates = gateList(name, `${where}gates`, w.gates);
      if (gates.length === 0) fail(name, `${where}gates`, 'expected at least one gate');
      if (typeof w.reason !== 'string' || w.reason.trim() === '') fail(name, `${where}reason`, 'expected a non-empty string saying why');
      config.waivers.push({ files, gates, reason: w.reason });
    });
  }
  return config;
}

/** Whether absolute path `file` matches one of `globs`, taken relative to `config`'s folder. */
export function matchesGlobs(config: Config, globs: string[], file: string): boolean {
  const rel = path.relative(path.dirname(config.file), file).split(path.sep).join('/');
  if (rel === '' || rel.startsWith('../') || rel === '..' || path.isAbsolute(rel)) return false;
  return picomatch(globs, { dot: true })(rel);
}

/** The top-level settings of `config` (for every file, before overrides). */
export function topSettings(config: Config): ConfigSettings {
  const out: ConfigSettings = {};
  for (const k of SETTING_KEYS) if (config[k] !== undefined) (out as Record<string, unknown>)[k] = config[k];
  return out;
}

/** The settings of `config` for absolute path `file`: the top level, then each matching override in order. */
export function settingsFor(config: Config, file: string): ConfigSettings {
  const out: ConfigSettings = {};
  const apply = (s: ConfigSettings) => {
    for (const k of SETTING_KEYS) {
      if (s[k] === undefined) continue;
      if (k === 'limits') out.limits = { ...(out.limits ?? {}), ...s.limits };
      else (out as Record<string, unknown>)[k] = s[k];
    }
  };
  apply(config);
  for (const o of config.overrides) if (matchesGlobs(config, o.files, file)) apply(o);
  return out;
}

/** The waivers of `config` for absolute path `file`: one {gate, reason} per gate, the first matching waiver's reason. */
export function waiversFor(config: Config, file: string): { gate: string; reason: string }[] {
  const out: { gate: string; reason: string }[] = [];
  for (const w of config.waivers) {
    if (!matchesGlobs(config, w.files, file)) continue;
    for (const g of w.gates) if (!out.some((x) => x.gate === g)) out.push({ gate: g, reason: w.reason });
  }
  return out;
}
