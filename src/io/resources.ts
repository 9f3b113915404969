/**
 * Where the files an asset names (external buffers, images, material libraries) come from:
 * the file system beside the asset (the default), or byte arrays given by URI, for an asset
 * read from memory (`readAssetBytes`). Both apply the same URI rules (src/io/uri.ts): data:
 * URIs decode in place; a relative URI must stay inside the asset's folder.
 */
import { TanframeError } from '../mesh/errors.js';
import { readRegularFile } from './files.js';
import { resolveResourceUri, uriToRelativePath, type ResolvedResource } from './uri.js';

/** A reader's access to the files its asset names. */
export interface ResourceSource {
  /** Resolves `uri` as named by the asset in `baseDir` (throws 'bad-uri' like resolveResourceUri). */
  resolve(uri: string, baseDir: string): ResolvedResource;
  /**
   * The bytes of a resolved file; rejects with an error whose `code` is 'ENOENT' when it does
   * not exist (other codes as the file system gives them).
   */
  readFile(resolvedPath: string): Promise<Uint8Array>;
}

/** The files beside the asset on disk. */
export const diskResources: ResourceSource = {
  resolve: resolveResourceUri,
  readFile: readRegularFile,
};

/**
 * An asset's resources in memory, by URI as the asset writes it (or as a relative path:
 * `textures/crate%20diffuse.png` and `textures/crate diffuse.png` name the same file).
 */
export type AssetResources = Record<string, Uint8Array> | Map<string, Uint8Array>;

/**
 * A ResourceSource over byte arrays. Keys are normalised like URIs (percent-decoded, `./`
 * and `a/../` folded), so a key matches the URIs that name the same relative path; a resolved
 * file's path is that relative path. A missing key reads as a missing file. Throws
 * 'invalid-argument' for a value that is not a Uint8Array, 'bad-uri' for a key that could
 * never be named (absolute, escaping with '..', another scheme).
 */
export function memoryResources(resources: AssetResources | undefined): ResourceSource {
  const files = new Map<string, Uint8Array>();
  const entries = resources instanceof Map ? [...resources.entries()] : Object.entries(resources ?? {});
  for (const [key, bytes] of entries) {
    if (!(bytes instanceof Uint8Array)) throw new TanframeError('invalid-argument', `resource '${String(key)}' is not a Uint8Array`);
    files.set(uriToRelativePath(String(key)), bytes);
  }
  return {
    resolve(uri: string): ResolvedResource {
      if (/^data:/i.test(uri)) return resolveResourceUri(uri, '');
      return { kind: 'file', path: uriToRelativePath(uri) };
    },
    async readFile(resolvedPath: string): Promise<Uint8Array> {
      const bytes = files.get(resolvedPath);
      if (!bytes) throw Object.assign(new Error(`'${resolvedPath}' is not among the given resources`), { code: 'ENOENT' });
      return bytes;
    },
  };
}
