/**
 * `tanframe convert-map`: converts a normal-map image between tangent space and object space,
 * between two methods' tangent frames, and between green conventions, using the mesh's own
 * frames (the same solve as `bake`). PNG in and out, written atomically.
 */
import * as path from 'node:path';
import { TanframeError } from '../mesh/errors.js';
import { cleanText } from '../mesh/text.js';
import type { FrameMethod } from '../mesh/types.js';
import { readInputBytes, writeFilesAtomic } from '../io/files.js';
import { convertNormalMap, flipGreen, type GreenDirection, type MapSpace } from '../imaging/convert.js';
import { decodePng, encodePng, type PngImage } from '../imaging/png.js';
import { mapPartsForAsset } from '../lib/mapFrames.js';
import { readAsset } from '../lib/processFile.js';
import { progressWanted } from './progress.js';
import type { CliIo } from './shared.js';

/** Maps at least this many texels (2048 x 2048) show progress on a terminal. */
export const PROGRESS_MIN_TEXELS = 2048 * 2048;

/** Least time between two progress redraws, in ms. */
const REDRAW_MS = 100;

/** Re-throws a TanframeError with the file it concerns in front of its message. */
function inFile<T>(file: string, fn: () => T): T {
  try {
    return fn();
  } catch (err) {
    if (err instanceof TanframeError) throw new TanframeError(err.code, `${file}: ${err.message}`);
    throw err;
  }
}

async function inFileAsync<T>(file: string, fn: () => Promise<T>): Promise<T> {
  try {
    return await fn();
  } catch (err) {
    if (err instanceof TanframeError) throw new TanframeError(err.code, `${file}: ${err.message}`);
    throw err;
  }
}

const n = (x: number) => x.toLocaleString('en-US');

/** The `convert-map` command's body, callable in-process. Returns the exit status. */
export async function runConvertMap(o: Record<string, any>, io: CliIo): Promise<number> {
  const started = performance.now();
  const from = o.from as MapSpace, to = o.to as MapSpace;
  if (o.fromMethod && from !== 'tangent') throw new TanframeError('usage', '--from-method applies to a tangent-space input only (--from tangent)');
  if (o.toMethod && to !== 'tangent') throw new TanframeError('usage', '--to-method applies to a tangent-space output only (--to tangent)');
  const fromMethod = (o.fromMethod ?? 'mikktspace') as FrameMethod;
  const toMethod = (o.toMethod ?? 'mikktspace') as FrameMethod;
  const inGreen = o.inGreen as GreenDirection, outGreen = o.outGreen as GreenDirection;
  const outDepth = o.outDepth ? (Number(o.outDepth) as 8 | 16) : undefined;
  const greenOnly = from === to && (from === 'object' || fromMethod === toMethod);
  if (greenOnly && inGreen === outGreen && outDepth === undefined) {
    throw new TanframeError('usage', 'nothing to convert: same space, method and green convention (change --to, a method, --out-green or --out-depth)');
  }
  if (!greenOnly && !o.mesh) throw new TanframeError('usage', '--mesh is required to convert between spaces or tangent methods');
  const inAbs = path.resolve(io.cwd, o.in), outAbs = path.resolve(io.cwd, o.out);
  if (path.extname(outAbs).toLowerCase() !== '.png') {
    throw new TanframeError('usage', `${o.out}: convert-map writes PNG only (give the output a .png name)`);
  }
  if (inAbs === outAbs) throw new TanframeError('usage', `${o.out}: the output would overwrite the input map; write it elsewhere`);

  const image: PngImage = await inFileAsync(o.in, async () => decodePng(await readInputBytes(inAbs)));
  const texels = image.width * image.height;
  let result: PngImage;
  let summary: string;
  if (greenOnly) {
    result = inFile(o.in, () => inGreen === outGreen ? flipGreen(flipGreen(image), outDepth) : flipGreen(image, outDepth));
    const what = inGreen === outGreen ? `depth ${image.depth} -> ${result.depth} bits` : `green flipped (${inGreen} -> ${outGreen})`;
    summary = `${what}, ${n(texels)} texels`;
  } else {
    const meshAbs = path.resolve(io.cwd, o.mesh);
    const asset = await inFileAsync(o.mesh, () => readAsset(meshAbs));
    const selection = inFile(o.mesh, () => mapPartsForAsset(asset, {
      imageName: path.basename(inAbs), from, to, fromMethod, toMethod, uv: o.uv ?? null, primitives: o.meshPrimitive ?? null,
    }));
    if (!o.quiet) for (const s of selection.skipped) io.stderr(`tanframe: ${cleanText(o.mesh)}: skipped ${cleanText(s)}\n`);
    const showProgress = texels >= PROGRESS_MIN_TEXELS && progressWanted(!!io.stderrIsTTY, io.env, o);
    let last = -Infinity, drawn = false;
    const onProgress = showProgress
      ? (doneTris: number, total: number) => {
          const t = performance.now();
          if (doneTris < total && t - last < REDRAW_MS) return;
          last = t;
          drawn = true;
          io.stderr(`\r\u001b[2Ktanframe convert-map: ${Math.floor((100 * doneTris) / total)}% of ${n(total)} triangles`);
        }
      : undefined;
    let converted: ReturnType<typeof convertNormalMap>;
    try {
      converted = inFile(o.in, () => convertNormalMap(image, selection.parts, {
        from, to, inGreen, outGreen, padding: o.padding ?? 8, outDepth,
      }, onProgress));
    } finally {
      if (drawn) io.stderr('\r\u001b[2K');
    }
    result = converted.image;
    const s = converted.stats;
    const prims = selection.primitives.length;
    const by = selection.selectedBy === 'image' ? 'using this image' : selection.selectedBy === 'all' ? 'all; none names this image' : 'as given';
    const spaceIn = from === 'tangent' ? `tangent/${fromMethod}` : 'object';
    const spaceOut = to === 'tangent' ? `tangent/${toMethod}` : 'object';
    summary = `${spaceIn} -> ${spaceOut}, ${prims} primitive${prims === 1 ? '' : 's'} (${by}), ${n(s.triangles)} triangles, ` +
      `${n(s.covered)} of ${n(texels)} texels covered, ${n(s.conflicts)} conflict${s.conflicts === 1 ? '' : 's'} (first kept), ${n(s.padded)} padded` +
      (s.fallbackTexels > 0 ? `, ${n(s.fallbackTexels)} fallback` : '') +
      (s.skippedTriangles > 0 ? `, ${n(s.skippedTriangles)} triangles skipped (UVs not finite or too large)` : '');
  }
  const showWrite = texels >= PROGRESS_MIN_TEXELS && progressWanted(!!io.stderrIsTTY, io.env, o);
  if (showWrite) io.stderr(`\r\u001b[2Ktanframe convert-map: writing ${cleanText(o.out)}`);
  try {
    const bytes = encodePng(result);
    await inFileAsync(o.out, () => writeFilesAtomic([{ path: outAbs, bytes }]));
  } finally {
    if (showWrite) io.stderr('\r\u001b[2K');
  }
  const seconds = (performance.now() - started) / 1000;
  if (!o.quiet) io.stdout(`convert-map: ${cleanText(o.in)} -> ${cleanText(o.out)}: ${summary}, ${seconds.toFixed(2)} s\n`);
  return 0;
}
