/**
 * The files an asset was read from besides the input itself (external buffers, images,
 * material libraries), and the output of a bake that changes nothing: the input's own bytes.
 * Based on: DESIGN.md, Guarantees ("a file whose primitives all stay as they were is written
 * as the input's bytes (a copy for -o, nothing for --in-place)"); glTF 2.0 specification,
 * 3.6.1 (buffer URIs) and 3.8.3 (image URIs): relative URIs resolve against the file's folder,
 * so the same relative paths under the output folder keep a copied file whole.
 */
import * as path from 'node:path';
import type { Asset } from '../mesh/asset.js';
import { TanframeError } from '../mesh/errors.js';
import { readInputBytes, readRegularFile, type OutputFile } from '../io/files.js';
import { realPathOfNearestExisting, resolveResourceUri, uriToRelativePath } from '../io/uri.js';

/** One file an asset references: its path relative to the input's folder ('/'-separated) and absolute. */
export interface ReferencedFile {
  /** For a buffer or image, its URI as a relative path (percent-decoded); for a library, its path from the input's folder. */
  relative: string;
  path: string;
  /** What needs it: a buffer, an image or (OBJ) a material library. */
  kind: 'buffer' | 'image' | 'material-library';
}

/** True when nothing is at `p`, or exactly `bytes`. */
async function holdsOrAbsent(p: string, bytes: Uint8Array): Promise<boolean> {
  let current: Buffer;
  try {
    current = await readRegularFile(p);
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'ENOENT';
  }
  return current.byteLength === bytes.byteLength && Buffer.compare(current, bytes) === 0;
}

function realOrSelf(p: string): string {
  try {
    return realPathOfNearestExisting(p);
  } catch {
    return p;
  }
}

function toPosix(p: string): string {
  return p.split(path.sep).join('/');
}

/**
 * Every external file `asset` (read from `input`) names, in a fixed order (buffers in json
 * order, images, material libraries), each once: buffers with a file URI (data: URIs are part
 * of the input), images named by URI (found or not) and, for OBJ, its .mtl files (found or
 * not). Paths are those the reader resolved (real paths), inside the input's folder.
 */
export function referencedFiles(asset: Asset, input: string): ReferencedFile[] {
  const baseDir = path.dirname(path.resolve(input));
  const out: ReferencedFile[] = [];
  const seen = new Set<string>();
  const add = (abs: string, kind: ReferencedFile['kind'], uri: string | null) => {
    if (seen.has(abs)) return;
    seen.add(abs);
    out.push({ relative: uri !== null ? uriToRelativePath(uri) : toPosix(path.relative(realOrSelf(baseDir), abs)), path: abs, kind });
  };
  if (asset.container !== 'obj' && Array.isArray(asset.json?.buffers)) {
    for (const b of asset.json.buffers) {
      if (typeof b?.uri !== 'string' || /^data:/i.test(b.uri)) continue;
      try {
        const r = resolveResourceUri(b.uri, baseDir);
        if (r.kind === 'file') add(r.path, 'buffer', b.uri);
      } catch {
        // The reader accepted the asset, so its buffer URIs resolve.
      }
    }
  }
  for (const img of asset.externalImages) add(img.path, 'image', img.uri);
  for (const mtl of asset.materialLibraries ?? []) add(mtl, 'material-library', null);
  return out;
}

/**
 * The files to write for an asset none of whose primitives changed (`changed` false), or null
 * when the bake must encode: an OBJ input, or an output container other than the input's.
 * In place (`output` is the input) nothing is written: []. For -o: the input's bytes at
 * `output`, and each buffer and image file it references (present on disk) at the same
 * relative path beside `output`, byte for byte, so compression, layout and every byte the
 * file holds stay as they were. Files are read anew; a file that vanished since the read
 * fails the file ('read-failed'), as a missing input would. When a copied buffer would replace
 * a different file already at its destination, null: the encoder's layout then keeps the
 * replaced asset whole (a copy replaces the buffer before the JSON, and a reader between the
 * two would see the old JSON over the new buffer). With the run's write plan (`planned`: the
 * paths it lets this job write), also null when an image copy is not one of them (the plan
 * writes nothing beside a GLB: the encoder embeds its images).
 */
export async function unchangedOutputs(
  asset: Asset, input: string, output: string, format: 'glb' | 'gltf', changed: boolean, planned?: string[],
): Promise<OutputFile[] | null> {
  if (changed || asset.container === 'obj' || asset.container !== format) return null;
  if (path.resolve(output) === path.resolve(input)) return [];
  const files: OutputFile[] = [{ path: output, bytes: await readInputBytes(input) }];
  const outDir = path.dirname(path.resolve(output));
  const allowed = planned ? new Set(planned.map((p) => path.resolve(p))) : null;
  const present = new Set(asset.externalImages.filter((img) => img.bytes !== null).map((img) => img.path));
  for (const ref of referencedFiles(asset, input)) {
    if (ref.kind === 'material-library') continue;
    if (ref.kind === 'image' && !present.has(ref.path)) continue;
    if (ref.kind === 'image' && allowed && !allowed.has(path.join(outDir, ...ref.relative.split('/')))) return null;
    let bytes: Uint8Array;
    try {
      bytes = await readRegularFile(ref.path);
    } catch (err) {
      // A meshopt fallback buffer may be absent: the reader accepted the asset without it.
      if (ref.kind === 'buffer' && (err as NodeJS.ErrnoException).code === 'ENOENT') continue;
      throw new TanframeError('read-failed', `cannot copy '${ref.relative}': ${(err as Error).message}`);
    }
    const target = path.join(outDir, ...ref.relative.split('/'));
    if (ref.kind === 'buffer' && !(await holdsOrAbsent(target, bytes))) return null;
    files.push({ path: target, bytes });
  }
  return files;
}
