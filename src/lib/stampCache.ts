/**
 * Machine-local stamps of hashed files, so a rerun checks an unchanged file by its metadata
 * instead of reading and hashing its bytes again.
 * Based on: POSIX stat(2) (st_dev, st_ino, st_size, st_mtim, st_ctim); the "racily clean"
 * rule of content-addressed build caches (common practice): a stamp taken too soon after the
 * file's last modification is not trusted, because a second write in the same timestamp tick
 * would leave the metadata as it was.
 *
 * The state file in the output folder (runState.ts) stays portable and deterministic: it holds
 * content hashes only. The stamps (device, inode, size, modification and change times in
 * nanoseconds, each with the SHA-256 it vouches for) live outside the asset tree, in the
 * user's cache folder: `$TANFRAME_CACHE_DIR`, else `$XDG_CACHE_HOME/tanframe`, else
 * `$HOME/.cache/tanframe`, one file per state file (`stamps-<hash of its path>.json`). They
 * are a hint, never the truth: a stamp is used only when every field matches the file now and
 * it was taken at least STAMP_RACE_NS (STAMP_RACE_COARSE_NS on file systems with whole-second
 * times) after the file's modification time, or it records bytes this tool wrote itself and
 * stat'ed right after the rename. Anything else hashes the bytes. The cache is best effort: a
 * cache folder that cannot be read or written costs speed, never a failure, and `--force`
 * ignores it with the state. Nothing here runs at import time.
 */
import { createHash } from 'node:crypto';
import * as fs from 'node:fs';
import * as fsp from 'node:fs/promises';
import * as path from 'node:path';
import { writeFilesAtomic } from '../io/files.js';

/** A stamp is trusted when taken this long after the file's modification time (100 ms; kernel timestamp ticks are at most 10 ms). Our choice. */
export const STAMP_RACE_NS = 100_000_000n;
/** The same on file systems that store whole seconds (FAT keeps 2 s): 3 s. Our choice. */
export const STAMP_RACE_COARSE_NS = 3_000_000_000n;
/** Schema tag of a stamp file. */
export const STAMP_SCHEMA = 'tanframe-stamps/1';

/** What stat(2) says of a file, in the fields a stamp compares (decimal strings: JSON has no 64-bit integers). */
export interface Stamp {
  dev: string;
  ino: string;
  size: string;
  mtimeNs: string;
  ctimeNs: string;
  /** When the stamp was taken (wall clock, ns). */
  atNs: string;
  /** SHA-256 (hex) of the bytes the file held. */
  sha256: string;
  /** The tool wrote these bytes and stat'ed the file right after the rename. */
  own?: boolean;
}

/**
 * A file's stat in stamp fields, or null when it is not a regular file. Synchronous on
 * purpose: one stat system call costs microseconds, a round trip through the thread pool more
 * than that (a rerun stats every file it once wrote or read).
 */
export function statStamp(file: string): Omit<Stamp, 'sha256' | 'atNs'> | null {
  let st: fs.BigIntStats | undefined;
  try {
    st = fs.statSync(file, { bigint: true, throwIfNoEntry: false });
  } catch {
    return null;
  }
  if (!st?.isFile()) return null;
  return { dev: String(st.dev), ino: String(st.ino), size: String(st.size), mtimeNs: String(st.mtimeNs), ctimeNs: String(st.ctimeNs) };
}

function sameStat(a: Omit<Stamp, 'sha256' | 'atNs'>, b: Omit<Stamp, 'sha256' | 'atNs'>): boolean {
  return a.dev === b.dev && a.ino === b.ino && a.size === b.size && a.mtimeNs === b.mtimeNs && a.ctimeNs === b.ctimeNs;
}

function nowNs(): bigint {
  return BigInt(Date.now()) * 1_000_000n;
}

/** True when `s` may stand for the file's bytes: taken long enough after the last modification, or the tool's own write. */
export function stampTrusted(s: Stamp): boolean {
  if (s.own) return true;
  const mtime = BigInt(s.mtimeNs);
  const race = mtime % 1_000_000_000n === 0n ? STAMP_RACE_COARSE_NS : STAMP_RACE_NS;
  return BigInt(s.atNs) - mtime >= race;
}

/** Streams the file through SHA-256 (hex); null when it cannot be read. */
function hashStream(file: string): Promise<string | null> {
  return new Promise((resolve) => {
    const hash = createHash('sha256');
    const stream = fs.createReadStream(file, { highWaterMark: 1 << 20 });
    stream.on('data', (chunk) => hash.update(chunk));
    stream.on('error', () => resolve(null));
    stream.on('end', () => resolve(hash.digest('hex')));
  });
}

/**
 * SHA-256 of a file's bytes with the stamp that vouches for them: stat before and after the
 * hash; the stamp is null when the file changed while it was read (the hash still stands for
 * what was read). Null hash for a file that is absent or not a readable regular file.
 */
export async function hashWithStamp(file: string): Promise<{ sha256: string | null; stamp: Stamp | null }> {
  const before = statStamp(file);
  if (!before) return { sha256: null, stamp: null };
  const at = nowNs();
  const sha256 = await hashStream(file);
  if (sha256 === null) return { sha256: null, stamp: null };
  const after = statStamp(file);
  return { sha256, stamp: after && sameStat(before, after) ? { ...before, atNs: String(at), sha256 } : null };
}

/** Stamp of a file the tool has just written with bytes of hash `sha256` (null when it is not there). */
export async function ownStamp(file: string, sha256: string): Promise<Stamp | null> {
  const st = statStamp(file);
  return st ? { ...st, atNs: String(nowNs()), sha256, own: true } : null;
}

/** The cache folder from the environment (see the module doc), or null when none is known. */
export function cacheFolder(env: Record<string, string | undefined>): string | null {
  if (env.TANFRAME_CACHE_DIR) return path.resolve(env.TANFRAME_CACHE_DIR);
  if (env.XDG_CACHE_HOME && path.isAbsolute(env.XDG_CACHE_HOME)) return path.join(env.XDG_CACHE_HOME, 'tanframe');
  if (env.HOME && path.isAbsolute(env.HOME)) return path.join(env.HOME, '.cache', 'tanframe');
  return null;
}

function isStamp(s: any): s is Stamp {
  return s !== null && typeof s === 'object' && /^[0-9a-f]{64}$/.test(s.sha256) &&
    ['dev', 'ino', 'size', 'mtimeNs', 'ctimeNs', 'atNs'].every((k) => typeof s[k] === 'string' && /^\d{1,30}$/.test(s[k])) &&
    (s.own === undefined || typeof s.own === 'boolean');
}

/** The stamps of one state file's files during one run: `sha` looks up or hashes, `put` adds, `save` keeps those used. */
export class StampCache {
  private readonly used = new Map<string, Stamp>();
  private changed = false;

  private constructor(private readonly file: string | null, private readonly stateFile: string, private readonly known: Map<string, Stamp>) {}

  /**
   * Opens the stamps of the state file `stateFile` (absolute) in `folder`; an empty cache when
   * `folder` is null, `read` is false (--force: stamps are made, none is used) or the file is
   * unusable. Nothing is written when `folder` is null.
   */
  static async open(folder: string | null, stateFile: string, read = true): Promise<StampCache> {
    const tag = createHash('sha256').update(stateFile).digest('hex').slice(0, 16);
    const file = folder ? path.join(folder, `stamps-${tag}.json`) : null;
    const known = new Map<string, Stamp>();
    try {
      if (!file || !read) throw new Error('not read');
      const json = JSON.parse(await fsp.readFile(file, 'utf8'));
      if (json?.schema === STAMP_SCHEMA && json.stateFile === stateFile && json.stamps && typeof json.stamps === 'object') {
        for (const [p, s] of Object.entries(json.stamps)) if (path.isAbsolute(p) && isStamp(s)) known.set(p, s);
      }
    } catch {
      // absent or unreadable: no stamps
    }
    return new StampCache(file, stateFile, known);
  }

  /** The stamp file's path (null when there is none). */
  get path(): string | null {
    return this.file;
  }

  /** SHA-256 of the file now: from its stamp when trusted and matching, else by hashing (and stamping) its bytes. */
  async sha(file: string): Promise<string | null> {
    const abs = path.resolve(file);
    const s = this.known.get(abs);
    if (s && stampTrusted(s)) {
      const now = statStamp(abs);
      if (now && sameStat(now, s)) {
        this.keep(abs, s);
        return s.sha256;
      }
    }
    const h = await hashWithStamp(abs);
    if (h.stamp) this.put(abs, h.stamp);
    return h.sha256;
  }

  /** Adds (or replaces) the stamp of `file`. */
  put(file: string, stamp: Stamp): void {
    const abs = path.resolve(file);
    const old = this.used.get(abs) ?? this.known.get(abs);
    this.used.set(abs, stamp);
    if (!old || JSON.stringify(old) !== JSON.stringify(stamp)) this.changed = true;
  }

  private keep(abs: string, s: Stamp): void {
    if (!this.used.has(abs)) this.used.set(abs, s);
  }

  /**
   * Writes the stamps this run used or made (sorted, atomically); never throws, writes nothing
   * when nothing changed or when `mayWrite` refuses the file (the run reads it: an input, or a
   * file an input references).
   */
  async save(mayWrite: (file: string) => boolean = () => true): Promise<void> {
    if (!this.file || !mayWrite(this.file)) return;
    if (!this.changed && this.used.size === this.known.size) return;
    const stamps: Record<string, Stamp> = {};
    for (const k of [...this.used.keys()].sort()) stamps[k] = this.used.get(k)!;
    const text = JSON.stringify({ schema: STAMP_SCHEMA, stateFile: this.stateFile, stamps }) + '\n';
    try {
      await writeFilesAtomic([{ path: this.file, bytes: new TextEncoder().encode(text) }]);
    } catch {
      // best effort: a cache that cannot be written only costs speed
    }
  }
}
