/**
 * `tanframe render`: draws the model on the CPU into one PNG sheet (DESIGN.md `render`): a row
 * per mode (shaded, mismatch, findings), a column per view. Thin: options in, the library's
 * renderAssetPng out, written atomically under the run's write plan.
 */
import * as path from 'node:path';
import { TanframeError } from '../mesh/errors.js';
import { cleanText } from '../mesh/text.js';
import { writeFilesAtomic } from '../io/files.js';
import { readAsset } from '../lib/processFile.js';
import { renderAssetPng, type RenderAssetOptions } from '../lib/renderAsset.js';
import { planRun } from '../lib/writePlan.js';
import type { ModeName, ViewName } from '../render/index.js';
import type { CliIo } from './shared.js';

export { MAX_RENDER_SIZE, MIN_RENDER_SIZE } from './commands.js';

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
