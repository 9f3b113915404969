/**
 * What the command line needs before any command runs: the CliIo type, the version, and the
 * options `bake` and `audit` share with their parsers. Light on purpose (commander, the gate
 * names and limits, no readers or writers): `tanframe --version` and the program's
 * registration load only this (src/cli/commands.ts).
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Command, InvalidArgumentError, Option } from 'commander';
import { GATE_NAMES, type GateName } from '../lib/options.js';
import { parseLimit } from '../lib/gates.js';
import { DEFAULT_MAX_TRIANGLES } from '../io/limits.js';
import type { ProgressClock } from './progress.js';

/** Where the CLI reads and writes; injectable so tests run it in-process. */
export interface CliIo {
  stdout: (s: string) => void;
  stderr: (s: string) => void;
  cwd: string;
  /** stdout is a terminal (colour). */
  isTTY: boolean;
  env: Record<string, string | undefined>;
  /** stderr is a terminal (progress bar); false when absent. */
  stderrIsTTY?: boolean;
  /** The terminal's width in columns now (the progress bar fits it); undefined: unknown. */
  stderrColumns?: () => number | undefined;
  /** The clock progress reads (default: the system's); tests pass a fake one. */
  clock?: ProgressClock;
  /** Script the batch's worker threads start from (default: the compiled worker beside the CLI). */
  workerScript?: URL;
}

/**
 * Default `--file-timeout` in seconds: generous enough for the largest file the default
 * --max-triangles admits on a slow machine, short enough that one hung file cannot stall a
 * CI job for long. A choice of ours.
 */
export const DEFAULT_FILE_TIMEOUT_S = 300;

/** The package version, read once from package.json. */
export function toolVersion(): string {
  try {
    const here = path.dirname(fileURLToPath(import.meta.url));
    const pkg = JSON.parse(fs.readFileSync(path.join(here, '..', '..', 'package.json'), 'utf8'));
    return String(pkg.version);
  } catch {
    return '0.0.0';
  }
}

function intArg(min: number) {
  return (value: string): number => {
    if (!/^\d+$/.test(value) || Number(value) < min) throw new InvalidArgumentError(`expected an integer >= ${min}`);
    return Number(value);
  };
}

function numberArg(min: number, max: number) {
  return (value: string): number => {
    const x = Number(value);
    if (value.trim() === '' || !Number.isFinite(x) || x < min || x > max) throw new InvalidArgumentError(`expected a number in [${min}, ${max}]`);
    return x;
  };
}

function gateList(value: string): GateName[] {
  const names = value.split(',').map((s) => s.trim()).filter(Boolean);
  for (const g of names) {
    if (!(GATE_NAMES as readonly string[]).includes(g)) {
      throw new InvalidArgumentError(`unknown gate '${g}' (gates: ${GATE_NAMES.join(', ')})`);
    }
  }
  return names as GateName[];
}

function limitArg(value: string, previous: string[] | undefined): string[] {
  try {
    parseLimit(value);
  } catch (err) {
    throw new InvalidArgumentError((err as Error).message.replace(/^--limit: /, ''));
  }
  return [...(previous ?? []), value];
}

function shardArg(value: string): { k: number; n: number } {
  const m = /^(\d+)\/(\d+)$/.exec(value);
  if (!m || Number(m[2]) < 1 || Number(m[1]) < 1 || Number(m[1]) > Number(m[2])) {
    throw new InvalidArgumentError('expected k/n with 1 <= k <= n');
  }
  return { k: Number(m[1]), n: Number(m[2]) };
}

/** Adds the options `bake` and `audit` share (DESIGN.md). */
export function addSharedOptions(cmd: Command): Command {
  return cmd
    // Settings a config file may give have no commander default: undefined means "not on the
    // command line", and resolveSettings (config.ts) fills in the config's value or the default.
    .addOption(new Option('--method <method>', 'tangent method (default mikktspace)').choices(['mikktspace', 'lengyel']))
    .addOption(new Option('--weight <weight>', 'how lengyel sums triangle tangents (default derivative)').choices(['derivative', 'angle', 'area', 'uniform']))
    .option('--uv <n>', 'TEXCOORD set to derive frames from (default: the normal texture\'s set, else 0)', intArg(0))
    .option('--all-primitives', 'also primitives whose material has no normal texture')
    .option('--fail-on <gates>', `comma list of gates: ${GATE_NAMES.join(', ')}`, gateList)
    .option('--limit <gate=n|gate=p%>', 'repeatable: the gate trips when its count exceeds n, or its share of what it counts exceeds p percent (defaults: tangent-mismatch=1%, the others 0)', limitArg)
    .option('--max-degenerate-uv <n>', 'same as --limit degenerate-uv=<n>', intArg(0))
    .option('--tolerance <deg>', 'angle beyond which a stored tangent counts as mismatched (default 1)', numberArg(0, 180))
    .option('--config <file>', `read settings from this file instead of the nearest tanframe.config.json`)
    .option('--no-config', 'read no config file')
    .option('--uv-epsilon <x>', 'relative UV area below which a triangle is degenerate', numberArg(0, 1))
    .option('--max-triangles <n>', `most triangles one file may hold, checked before decoding (default ${DEFAULT_MAX_TRIANGLES})`, intArg(1))
    .option('--file-timeout <s>', `seconds one file may take in a batch before it fails with 'timeout' (0: no limit; default ${DEFAULT_FILE_TIMEOUT_S})`, numberArg(0, 1e9))
    .option('--exclude <glob>', 'leave out of folder walks and globs what this glob matches (repeatable)', (v: string, prev: string[]) => [...prev, v], [] as string[])
    .option('--report <file>', 'write the JSON report to this file')
    .option('--junit <file>', 'write a JUnit XML file: one test case per input file')
    .option('--html <file>', 'write one self-contained HTML page: summary, per-file tables, UV pictures')
    .option('--uv-maps <dir>', 'write one SVG picture of the UV layout per primitive with findings')
    .option('--views <dir>', 'write one PNG sheet of the shaded model per file with findings (as render makes it); --html embeds them')
    .option('--jobs <n>', 'worker threads (default: available cores; 1 runs in-process)', intArg(1))
    .option('--shard <k/n>', 'process only the k-th of n slices of the sorted input list', shardArg)
    .option('--json', 'print the JSON report on stdout instead of the summary', false)
    .addOption(annotateOption())
    .option('--quiet', 'print nothing but errors (no summary, no progress)', false)
    .option('--no-progress', 'no progress bar (drawn only on a terminal outside CI) and no progress lines in logs')
    .option('--debug', 'show stack traces of internal errors', false);
}

/** `--annotate github`, shared by bake, audit and report. */
export function annotateOption(): Option {
  return new Option('--annotate <kind>', 'also print GitHub Actions annotations on stdout after the summary: one per tripped gate and per failed file').choices(['github']);
}

