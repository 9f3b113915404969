/**
 * Reading input files and writing outputs atomically.
 * Based on: POSIX rename(2) atomicity within one file system (write a temporary file in the
 * destination folder, fsync it, then rename it over the destination). Common practice.
 */
import { randomBytes } from 'node:crypto';
import * as fsp from 'node:fs/promises';
import * as path from 'node:path';
import { TanframeError } from '../mesh/errors.js';

/** One output file: where it goes and its complete content. */
export interface OutputFile {
  path: string;
  bytes: Uint8Array;
}

/** A short, human reason for a file-system error code. */
function describeFsError(err: unknown): string {
  const e = err as NodeJS.ErrnoException;
  switch (e?.code) {
    case 'ENOENT':
      return 'not found';
    case 'EISDIR':
      return 'is a folder, not a file';
    case 'ENOTDIR':
      return 'a parent of the path is not a folder';
    case 'EACCES':
    case 'EPERM':
      return 'permission denied';
    case 'ENOSPC':
      return 'no space left on the device';
    case 'EROFS':
      return 'read-only file system';
    case 'EMFILE':
    case 'ENFILE':
      return 'too many open files';
    default:
      return e?.code ? `system error ${e.code}` : String((e as Error)?.message ?? e).split('\n')[0];
  }
}

/**
 * Reads a whole input file. Throws TanframeError 'read-failed' (not found, a folder,
 * permission denied, ...), 'too-large' (over what one buffer can hold) or 'empty-file'
 * (0 bytes). Messages do not name the file: the caller prefixes it.
 */
export async function readInputBytes(filePath: string): Promise<Uint8Array> {
  let buf: Buffer;
  try {
    buf = await fsp.readFile(filePath);
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ERR_FS_FILE_TOO_LARGE' || err instanceof RangeError) {
      throw new TanframeError('too-large', 'cannot read: the file is too large to load');
    }
    throw new TanframeError('read-failed', `cannot read: ${describeFsError(err)}`);
  }
  if (buf.byteLength === 0) throw new TanframeError('empty-file', 'the file is empty (0 bytes)');
  return new Uint8Array(buf.buffer, buf.byteOffset, buf.byteLength);
}

/** Temporary name beside `target`: `.<name>.<pid>.<random>.tmp`. */
function tempPathFor(target: string): string {
  const dir = path.dirname(target);
  return path.join(dir, `.${path.basename(target)}.${process.pid}.${randomBytes(6).toString('hex')}.tmp`);
}

/** Writes `bytes` to a new file at `tmp` (must not exist) and flushes it to disk. */
async function writeAndSync(tmp: string, bytes: Uint8Array): Promise<void> {
  const handle = await fsp.open(tmp, 'wx', 0o644);
  try {
    let off = 0;
    while (off < bytes.byteLength) {
      const { bytesWritten } = await handle.write(bytes, off, bytes.byteLength - off);
      off += bytesWritten;
    }
    await handle.sync();
  } finally {
    await handle.close();
  }
}

/** Throws (EISDIR) when `target` exists as a folder, so no rename starts that would fail on it. */
async function checkReplaceable(target: string): Promise<void> {
  const st = await fsp.lstat(target).catch(() => null);
  if (st?.isDirectory()) {
    const err = new Error('is a folder') as NodeJS.ErrnoException;
    err.code = 'EISDIR';
    throw err;
  }
}

/** Removes the given files, ignoring errors (cleanup after a failure). */
async function removeQuietly(paths: string[]): Promise<void> {
  await Promise.all(paths.map((p) => fsp.rm(p, { force: true }).catch(() => undefined)));
}

/**
 * Writes every file atomically: creates the folders (mkdir -p), writes each file to a
 * temporary file in its destination folder, fsyncs it, and only when all are written
 * renames each into place (after checking no destination is a folder). On any failure the temporary files are removed and
 * TanframeError 'write-failed' names the file and the reason. A destination is never
 * left half-written; if a rename fails after earlier renames succeeded, those earlier
 * files stay replaced (renames of several files cannot be one atomic step).
 */
export async function writeFilesAtomic(files: OutputFile[]): Promise<void> {
  const temps: string[] = [];
  let current = '';
  try {
    for (const file of files) {
      current = file.path;
      await fsp.mkdir(path.dirname(path.resolve(file.path)), { recursive: true });
      const tmp = tempPathFor(path.resolve(file.path));
      temps.push(tmp);
      await writeAndSync(tmp, file.bytes);
    }
    for (const file of files) {
      current = file.path;
      await checkReplaceable(path.resolve(file.path));
    }
    for (let i = 0; i < files.length; i++) {
      current = files[i].path;
      await fsp.rename(temps[i], path.resolve(files[i].path));
      temps[i] = '';
    }
  } catch (err) {
    await removeQuietly(temps.filter((t) => t !== ''));
    throw new TanframeError('write-failed', `cannot write '${current}': ${describeFsError(err)}`);
  }
}
