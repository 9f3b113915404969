/**
 * The commands' registrations: names, arguments and options, each action loading its command's
 * module (bake.ts, audit.ts, convert-map, report, render) with import() when it runs. So
 * `tanframe --version`, `--help` and a usage error load only commander and these option
 * parsers, and a command loads what it needs and nothing of the others (no PNG codec for a
 * bake, no mesh reader for `report`).
 */
import { Command, InvalidArgumentError, Option } from 'commander';
import { TanframeError } from '../mesh/errors.js';
import { MAX_PADDING } from '../imaging/limits.js';
import type { PrimitiveRef } from '../lib/mapFrames.js';
import { COMPRESSION_MODES, STATE_FILE_NAME } from '../lib/options.js';
import { defaultRenderOptions } from '../lib/renderOptions.js';
import { MODE_NAMES, VIEW_NAMES } from '../render/names.js';
import { addSharedOptions, annotateOption, type CliIo } from './options.js';

/** Registers `bake` on `program`; `done` receives the exit status. */
export function registerBake(program: Command, io: CliIo, done: (code: number) => void): void {
  const cmd = program
    .command('bake')
    .description('compute tangent frames and write the meshes with a TANGENT attribute')
    .argument('<inputs...>', 'files (.glb .gltf .obj), folders (searched recursively) or glob patterns')
    .option('-o, --out <path>', 'output file (one input file) or folder (mirrors the input layout)')
    .option('--in-place', 'replace each input by an atomic rename of a complete file', false)
    .addOption(new Option('--format <format>', 'output container (default: the input\'s; GLB for OBJ)').choices(['glb', 'gltf']))
    .option('--keep-existing', 'keep stored tangents that are valid', false)
    .addOption(new Option('--normals <mode>', 'normals: keep the file\'s (missing ones are generated flat), or regenerate').choices(['keep', 'flat', 'smooth']).default('keep'))
    .option('--smooth-angle <deg>', 'crease angle for --normals smooth', (v: string) => {
      const x = Number(v);
      if (!Number.isFinite(x) || x < 0 || x > 180) throw new TanframeError('usage', `--smooth-angle: expected degrees in [0, 180], got '${v}'`);
      return x;
    }, 60)
    .addOption(new Option('--tangent-type <type>', 'TANGENT component type').choices(['float', 'snorm16', 'snorm8']))
    .addOption(new Option('--compression <mode>', 'how baked primitives are stored: as they came in (Draco, meshopt, quantized), uncompressed, or compressed with Draco or meshopt').choices([...COMPRESSION_MODES]).default('keep'))
    .option('--dry-run', 'do everything but write the meshes', false)
    .option('--force', `bake every file, ignoring the state of earlier runs (${STATE_FILE_NAME})`, false);
  addSharedOptions(cmd);
  cmd.action(async (inputs: string[], o: Record<string, any>) => {
    done(await (await import('./bake.js')).runBake(inputs, o, io));
  });
}

/** Registers `audit` on `program`; `done` receives the exit status. */
export function registerAudit(program: Command, io: CliIo, done: (code: number) => void): void {
  const cmd = program
    .command('audit')
    .description('inspect meshes, report findings and fail the build on chosen gates (writes no meshes)')
    .argument('<inputs...>', 'files (.glb .gltf .obj), folders (searched recursively) or glob patterns');
  addSharedOptions(cmd);
  cmd.action(async (inputs: string[], o: Record<string, any>) => {
    done(await (await import('./audit.js')).runAudit(inputs, o, io));
  });
}

function paddingArg(value: string): number {
  if (!/^\d+$/.test(value) || Number(value) > MAX_PADDING) throw new InvalidArgumentError(`expected an integer in [0, ${MAX_PADDING}]`);
  return Number(value);
}

function uvArg(value: string): number {
  if (!/^\d+$/.test(value)) throw new InvalidArgumentError('expected an integer >= 0');
  return Number(value);
}

function primitiveArg(value: string, previous: PrimitiveRef[] | undefined): PrimitiveRef[] {
  const list = previous ?? [];
  for (const item of value.split(',').map((s) => s.trim()).filter(Boolean)) {
    const m = /^(.+)\/(\d+)$/.exec(item);
    if (!m) throw new InvalidArgumentError(`expected <mesh>/<primitive> (mesh index or name, primitive index), got '${item}'`);
    list.push({ mesh: m[1], primitive: Number(m[2]) });
  }
  return list;
}

/** Registers `convert-map` on `program`; `done` receives the exit status. */
export function registerConvertMap(program: Command, io: CliIo, done: (code: number) => void): void {
  program
    .command('convert-map')
    .description('convert a normal map between tangent and object space, tangent methods and green conventions')
    .option('--mesh <file>', 'the mesh the map belongs to (.glb .gltf .obj); not needed for a green flip')
    .requiredOption('--in <png>', 'input normal map (PNG, 8 or 16 bit)')
    .requiredOption('--out <png>', 'output normal map (PNG)')
    .addOption(new Option('--from <space>', 'space of the input map').choices(['tangent', 'object']).makeOptionMandatory())
    .addOption(new Option('--to <space>', 'space of the output map').choices(['tangent', 'object']).makeOptionMandatory())
    .addOption(new Option('--from-method <method>', 'frames the tangent-space input was made with (default mikktspace)').choices(['mikktspace', 'lengyel']))
    .addOption(new Option('--to-method <method>', 'frames of the tangent-space output (default mikktspace)').choices(['mikktspace', 'lengyel']))
    .addOption(new Option('--in-green <dir>', 'input green channel: up (+Y, glTF / OpenGL) or down (-Y)').choices(['up', 'down']).default('up'))
    .addOption(new Option('--out-green <dir>', 'output green channel: up (+Y, glTF / OpenGL) or down (-Y)').choices(['up', 'down']).default('up'))
    .option('--uv <n>', 'TEXCOORD set (default: the one the normal texture samples, else 0)', uvArg)
    .option('--mesh-primitive <mesh/prim>', 'convert over this primitive only (repeatable; mesh index or name); default: every primitive whose material uses this image, else all', primitiveArg)
    .option('--padding <px>', 'edge dilation into empty texels, in texels', paddingArg, 8)
    .addOption(new Option('--out-depth <bits>', 'output bits per sample (default: the input\'s)').choices(['8', '16']))
    .option('--quiet', 'print nothing but errors', false)
    .option('--no-progress', 'never show progress (shown only on a terminal, for large maps)')
    .option('--debug', 'show stack traces of internal errors', false)
    .action(async (o: Record<string, any>) => {
      done(await (await import('./convertMap.js')).runConvertMap(o, io));
    });
}

/** Registers `report` on `program`; `done` receives the exit status. */
export function registerReport(program: Command, io: CliIo, done: (code: number) => void): void {
  program
    .command('report')
    .description('merge JSON reports (the shards of one run): print the summary, write HTML, JUnit and JSON, exit as the whole run would have')
    .argument('<reports...>', 'JSON reports written by bake or audit with --report')
    .option('--html <file>', 'write one self-contained HTML page of the merged report')
    .option('--junit <file>', 'write a JUnit XML file: one test case per input file')
    .option('--json <file>', 'write the merged JSON report to this file')
    .addOption(annotateOption())
    .option('--quiet', 'print nothing but errors (no summary)', false)
    .action(async (files: string[], o: Record<string, any>) => {
      done(await (await import('./report.js')).runReport(files, o, io));
    });
}

/** Smallest and largest --size. Our choice: legends need 16 px; 4096 keeps one view's samples within 256 MB. */
export const MIN_RENDER_SIZE = 16;
export const MAX_RENDER_SIZE = 4096;

function listArg<T extends string>(names: readonly T[], what: string) {
  return (value: string): T[] => {
    const items = value.split(',').map((s) => s.trim()).filter(Boolean);
    if (items.length === 0) throw new InvalidArgumentError(`expected a comma list of ${what}: ${names.join(', ')}`);
    for (const i of items) if (!(names as readonly string[]).includes(i)) throw new InvalidArgumentError(`unknown ${what.replace(/s$/, '')} '${i}' (expected ${names.join(', ')})`);
    return [...new Set(items)] as T[];
  };
}

function sizeArg(value: string): number {
  if (!/^\d+$/.test(value) || Number(value) < MIN_RENDER_SIZE || Number(value) > MAX_RENDER_SIZE) {
    throw new InvalidArgumentError(`expected an integer in [${MIN_RENDER_SIZE}, ${MAX_RENDER_SIZE}]`);
  }
  return Number(value);
}

function lightArg(value: string): [number, number] {
  const m = /^\s*(-?\d+(?:\.\d+)?)\s*,\s*(-?\d+(?:\.\d+)?)\s*$/.exec(value);
  if (!m || Math.abs(Number(m[2])) > 90) throw new InvalidArgumentError('expected <azimuth>,<elevation> in degrees, elevation in [-90, 90] (e.g. 30,40)');
  return [Number(m[1]), Number(m[2])];
}

/** Registers `render` on `program`; `done` receives the exit status. */
export function registerRender(program: Command, io: CliIo, done: (code: number) => void): void {
  const d = defaultRenderOptions();
  program
    .command('render')
    .description('draw the model on the CPU into one PNG sheet: shaded with the baked frames, tangent mismatch, findings')
    .argument('<input>', 'mesh file (.glb .gltf .obj)')
    .requiredOption('-o, --out <file.png>', 'the PNG sheet to write')
    .option('--views <list>', `comma list of ${VIEW_NAMES.join(', ')}`, listArg(VIEW_NAMES, 'views'), d.views)
    .option('--modes <list>', `comma list of ${MODE_NAMES.join(', ')}`, listArg(MODE_NAMES, 'modes'), d.modes)
    .option('--size <px>', 'pixels per side of one view', sizeArg, d.size)
    .option('--light <azimuth>,<elevation>', 'light direction in degrees, view space (azimuth from +Z toward +X, elevation above the horizontal)', lightArg, d.light)
    .addOption(new Option('--method <method>', 'frames to bake and draw').choices(['mikktspace', 'lengyel']).default(d.method))
    .option('--uv <n>', 'TEXCOORD set to derive frames from (default: the one the normal texture samples, else 0)', uvArg)
    .option('--quiet', 'print nothing but errors', false)
    .option('--debug', 'show stack traces of internal errors', false)
    .action(async (input: string, o: Record<string, any>) => {
      done(await (await import('./render.js')).runRender(input, o, io));
    });
}
