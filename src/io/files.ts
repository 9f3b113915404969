/**
 * Reading input files and writing outputs atomically.
 * Based on: POSIX rename(2) atomicity within one file system (write a temporary file in the
 * destination folder, fsync it, then rename it over the destination). Common practice.
 *
 * Temporary files are named `.<name>.<host>.<pid>-<thread>.<random>.tmp` beside their
 * destination. A killed process can leave one behind: it is never a complete output, never
 * read as an input (wrong extension) and removed by the next write into that folder once no
 * process with its pid runs on this host (removeStaleTemps).
 */
import { randomBytes } from 'node:crypto';
import { constants as fsConstants } from 'node:fs';
import * as fsp from 'node:fs/promises';
import * as os from 'node:os';
import * as path from 'node:path';
import { threadId } from 'node:worker_threads';
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
    case 'ENOTREG':
      return 'not a regular file (a pipe, device or socket)';
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
 * Opening flags for reading: O_NONBLOCK (where the platform has it) so that opening a named
 * pipe returns at once instead of waiting for a writer that may never come.
 */
function readFlags(): number {
  return fsConstants.O_RDONLY | (fsConstants.O_NONBLOCK ?? 0);
}

/**
 * Reads a whole regular file. Anything else (a named pipe, a device such as /dev/zero, a
 * socket) is refused with an error whose code is 'ENOTREG' before a byte is read, so such a
 * file can neither block the run forever nor feed it endless data. Rejects with the
 * file-system error otherwise (ENOENT, EISDIR, EACCES, ...).
 */
export async function readRegularFile(filePath: string): Promise<Buffer> {
  const handle = await fsp.open(filePath, readFlags());
  try {
    const st = await handle.stat();
    if (st.isDirectory()) {
      const err = new Error('is a folder') as NodeJS.ErrnoException;
      err.code = 'EISDIR';
      throw err;
    }
    if (!st.isFile()) {
      const err = new Error('not a regular file') as NodeJS.ErrnoException;
      err.code = 'ENOTREG';
      throw err;
    }
    return await handle.readFile();
  } finally {
    await handle.close();
  }
}

/**
 * Reads a whole input file. Throws TanframeError 'read-failed' (not found, a folder, not a
 * regular file, permission denied, ...), 'too-large' (over what one buffer can hold) or
 * 'empty-file' (0 bytes). Messages do not name the file: the caller prefixes it.
 */
export async function readInputBytes(filePath: string): Promise<Uint8Array> {
  let buf: Buffer;
  try {
    buf = await readRegularFile(filePath);
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ERR_FS_FILE_TOO_LARGE' || err instanceof RangeError) {
      throw new TanframeError('too-large', 'cannot read: the file is too large to load');
    }
    throw new TanframeError('read-failed', `cannot read: ${describeFsError(err)}`);
  }
  if (buf.byteLength === 0) throw new TanframeError('empty-file', 'the file is empty (0 bytes)');
  return new Uint8Array(buf.buffer, buf.byteOffset, buf.byteLength);
}

let tempHostName: string | null = null;

/**
 * This host's name as written in temporary file names: letters, digits and '-' only (asked
 * on first use, so importing the module runs nothing).
 */
export function tempHost(): string {
  tempHostName ??= os.hostname().replace(/[^A-Za-z0-9-]/g, '-').slice(0, 40) || 'host';
  return tempHostName;
}

/** A temporary file of ours: `.<name>.<host>.<pid>-<thread>.<12 hex digits>.tmp`. */
const TEMP_NAME = /^\..+\.([A-Za-z0-9-]+)\.(\d+)-(\d+)\.[0-9a-f]{12}\.tmp$/;

/** Temporary name beside `target`: `.<name>.<host>.<pid>-<thread>.<random>.tmp`. */
function tempPathFor(target: string): string {
  const dir = path.dirname(target);
  return path.join(dir, `.${path.basename(target)}.${tempHost()}.${process.pid}-${threadId}.${randomBytes(6).toString('hex')}.tmp`);
}

/** True when a process with this pid runs (EPERM: it runs under another user). */
function processRuns(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/**
 * Removes this host's temporary files in `dir` whose (pid, thread) `doomed` accepts. Returns
 * the names removed; errors are ignored (cleanup is best effort).
 */
async function removeOurTemps(dir: string, doomed: (pid: number, thread: number) => boolean): Promise<string[]> {
  let names: string[];
  try {
    names = await fsp.readdir(dir);
  } catch {
    return [];
  }
  const removed: string[] = [];
  for (const name of names) {
    const m = TEMP_NAME.exec(name);
    if (!m || m[1] !== tempHost() || !doomed(Number(m[2]), Number(m[3]))) continue;
    await fsp.rm(path.join(dir, name), { force: true }).then(() => removed.push(name), () => undefined);
  }
  return removed;
}

/**
 * Removes the temporary files of ours in `dir` that a process on this host left behind when
 * it was killed: names matching our pattern, with this host's name and the pid of no running
 * process. Never touches other files, other hosts' temporaries (a shared network folder) or a
 * running process's. Returns the names removed; errors are ignored (cleanup is best effort).
 */
export function removeStaleTemps(dir: string): Promise<string[]> {
  return removeOurTemps(dir, (pid) => pid !== process.pid && !processRuns(pid));
}

/**
 * Removes the temporary files in `dir` written by thread `thread` of this process (after the
 * batch terminated that worker thread on a timeout). Returns the names removed.
 */
export function removeThreadTemps(dir: string, thread: number): Promise<string[]> {
  return removeOurTemps(dir, (pid, t) => pid === process.pid && t === thread);
}

/** Folders this thread has already cleaned of stale temporary files. */
const cleanedFolders = new Set<string>();

/**
 * Writes `bytes` to a new file at `tmp` (must not exist) and flushes it to disk; `mode`, when
 * given, is set exactly (not narrowed by the umask), so a replaced file keeps its permission bits.
 */
async function writeAndSync(tmp: string, bytes: Uint8Array, mode: number | null): Promise<void> {
  const handle = await fsp.open(tmp, 'wx', mode ?? 0o644);
  try {
    if (mode !== null) await handle.chmod(mode);
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

/** What is at a destination now: its permission bits, and whether it already holds `bytes`. */
async function currentState(target: string, bytes: Uint8Array): Promise<{ mode: number | null; same: boolean }> {
  const st = await fsp.stat(target).catch(() => null);
  if (!st || !st.isFile()) return { mode: null, same: false };
  const mode = st.mode & 0o7777;
  if (st.size !== bytes.byteLength) return { mode, same: false };
  const current = await readRegularFile(target).catch(() => null);
  return { mode, same: current !== null && Buffer.compare(current, bytes) === 0 };
}

/**
 * Test seam: called after every other file of an asset is in place and before its main file
 * (the .gltf JSON) is renamed. Only tests set it, to stop a run at that moment.
 */
export const writeHooks: {
  beforeMainRename?: (main: string) => void | Promise<void>;
  /** Called after the main file is in place and before what the old asset named is removed. */
  afterMainRename?: (main: string) => void | Promise<void>;
} = {};

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

/** How writeFilesAtomic replaces an asset of several files. */
export interface AssetWriteOptions {
  /** The file renamed last (the .gltf that names the others); default: the first file. */
  main?: string;
  /** Files to remove once the main file is in place (buffers only the old asset read). */
  removeAfter?: string[];
  /** Leftovers to remove then too: names in the main file's folder this accepts, unless written now or in `keep`. */
  leftovers?: { match: (name: string) => boolean; keep: string[] };
}

/**
 * Writes every file atomically: creates the folders (mkdir -p), writes each file to a
 * temporary file in its destination folder, fsyncs it, and only when all are written
 * renames each into place (after checking no destination is a folder), the main file last.
 * A file whose destination already holds exactly its bytes is not written (its modification
 * time stays); a replaced file keeps its permission bits, and a new file beside a replaced main
 * file gets the main file's. The first write into a folder also removes stale temporary files
 * there (removeStaleTemps). On any failure the temporary files are removed and TanframeError
 * 'write-failed' names the file and the reason. A destination is never left half-written.
 *
 * An asset of several files reads whole at every moment when its other files have names of
 * their own (a buffer named by its content): they are in place before the main file names
 * them, and what the old main file names is removed (`removeAfter`, `leftovers`) only after.
 */
export async function writeFilesAtomic(files: OutputFile[], options: AssetWriteOptions = {}): Promise<void> {
  const temps: string[] = [];
  let current = '';
  const main = path.resolve(options.main ?? files[0]?.path ?? '');
  try {
    const states = await Promise.all(files.map((f) => currentState(path.resolve(f.path), f.bytes)));
    const mainMode = states[files.findIndex((f) => path.resolve(f.path) === main)]?.mode ?? null;
    const order: number[] = [];
    for (let i = 0; i < files.length; i++) if (!states[i].same && path.resolve(files[i].path) !== main) order.push(i);
    for (let i = 0; i < files.length; i++) if (!states[i].same && path.resolve(files[i].path) === main) order.push(i);
    for (const i of order) {
      const file = files[i];
      current = file.path;
      const dir = path.dirname(path.resolve(file.path));
      await fsp.mkdir(dir, { recursive: true });
      if (!cleanedFolders.has(dir)) {
        cleanedFolders.add(dir);
        await removeStaleTemps(dir);
      }
      const tmp = tempPathFor(path.resolve(file.path));
      temps[i] = tmp;
      await writeAndSync(tmp, file.bytes, states[i].mode ?? mainMode);
    }
    for (const i of order) {
      current = files[i].path;
      await checkReplaceable(path.resolve(files[i].path));
    }
    for (const i of order) {
      current = files[i].path;
      if (path.resolve(files[i].path) === main) await writeHooks.beforeMainRename?.(main);
      await fsp.rename(temps[i], path.resolve(files[i].path));
      temps[i] = '';
    }
    if (order.length > 0) await writeHooks.afterMainRename?.(main);
  } catch (err) {
    await removeQuietly(temps.filter((t) => !!t));
    throw new TanframeError('write-failed', `cannot write '${current}': ${describeFsError(err)}`);
  }
  const written = new Set(files.map((f) => path.resolve(f.path)));
  // Removal only follows a main file that is part of this write: it names what the asset keeps.
  if (!written.has(main)) return;
  const doomed = (options.removeAfter ?? []).map((p) => path.resolve(p)).filter((p) => !written.has(p));
  if (options.leftovers) {
    const dir = path.dirname(main);
    const real = (p: string) => fsp.realpath(p).catch(() => path.resolve(p));
    const keep = new Set(await Promise.all(options.leftovers.keep.map(real)));
    const names = await fsp.readdir(dir).catch(() => [] as string[]);
    for (const n of names) {
      const p = path.join(dir, n);
      if (options.leftovers.match(n) && !written.has(p) && !keep.has(await real(p))) doomed.push(p);
    }
  }
  await removeQuietly(doomed);
}
