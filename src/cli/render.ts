/**
 * `tanframe render`: draws the model on the CPU into one PNG sheet (DESIGN.md `render`): a row
 * per mode (shaded, mismatch, findings), a column per view. Thin: options in, the library's
 * renderAssetPng out, written atomically under the run's write plan.
 */
import * as path from 'node:path';
import { Command, InvalidArgumentError, Option } from 'commander';
import { TanframeError } from '../mesh/errors.js';
import { cleanText } from '../mesh/text.js';
import { writeFilesAtomic } from '../io/files.js';
import { readAsset } from '../lib/processFile.js';
import { defaultRenderOptions, renderAssetPng, type RenderAssetOptions } from '../lib/renderAsset.js';
import { planRun } from '../lib/writePlan.js';
import { MODE_NAMES, VIEW_NAMES, type ModeName, type ViewName } from '../render/index.js';
import type { CliIo } from './shared.js';

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

function uvArg(value: string): number {
  if (!/^\d+$/.test(value)) throw new InvalidArgumentError('expected an integer >= 0');
  return Number(value);
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
      done(await runRender(input, o, io));
    });
}

/** The `render` command's body, callable in-process. Returns the exit status. */
export async function runRender(input: string, o: Record<string, any>, io: CliIo): Promise<number> {
  const started = performance.now();
  const inAbs = path.resolve(io.cwd, input), outAbs = path.resolve(io.cwd, o.out);
  if (path.extname(outAbs).toLowerCase() !== '.png') throw new TanframeError('usage', `${o.out}: render writes PNG only (give the output a .png name)`);
  // The plan refuses an output over the input or a file it references (exit 2, nothing written).
  const run = await planRun({ cwd: io.cwd, inputs: [inAbs], meshes: [], files: [{ option: '-o', path: outAbs }], folders: [] });
  const target = run.files.get('-o') ?? outAbs;
  const options: RenderAssetOptions = {
    views: o.views as ViewName[], modes: o.modes as ModeName[], size: o.size, light: o.light, method: o.method, uv: o.uv ?? null,
  };
  let rendered: Awaited<ReturnType<typeof renderAssetPng>>;
  try {
    const asset = await readAsset(inAbs);
    rendered = await renderAssetPng(asset, options);
  } catch (err) {
    if (err instanceof TanframeError) throw new TanframeError(err.code === 'usage' ? 'read-failed' : err.code, `${input}: ${err.message}`);
    throw err;
  }
  if (!o.quiet) for (const n of rendered.notes) io.stderr(`tanframe: ${cleanText(input)}: ${cleanText(n)}\n`);
  try {
    await writeFilesAtomic([{ path: target, bytes: rendered.png }]);
  } catch (err) {
    throw new TanframeError('write-failed', `${o.out}: ${(err as Error).message}`);
  }
  const seconds = (performance.now() - started) / 1000;
  if (!o.quiet) {
    io.stdout(`render: ${cleanText(input)} -> ${cleanText(o.out)}: ${options.views.join(',')} x ${options.modes.join(',')}, ${rendered.width} x ${rendered.height} px, ${seconds.toFixed(2)} s\n`);
  }
  return 0;
}
