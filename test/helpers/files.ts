/**
 * File-system helpers for tests.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';

/** Modification time (ns) of every file under `dir`, by relative path. */
export function mtimes(dir: string): Record<string, bigint> {
  const out: Record<string, bigint> = {};
  const walk = (d: string) => {
    for (const e of fs.readdirSync(d, { withFileTypes: true })) {
      const p = path.join(d, e.name);
      if (e.isDirectory()) walk(p);
      else out[path.relative(dir, p)] = fs.statSync(p, { bigint: true }).mtimeNs;
    }
  };
  walk(dir);
  return out;
}
