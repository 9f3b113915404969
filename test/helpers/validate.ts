/**
 * Validates a glTF / GLB file with the Khronos glTF-Validator (npm `gltf-validator`), the
 * reference validator of the glTF 2.0 standard. External resources (.bin, images) are read
 * from the file's folder.
 */
import { readFile } from 'node:fs/promises';
import * as path from 'node:path';
// Source: Khronos gltf-validator (node_modules/gltf-validator/README.md, validateBytes).
import validator from 'gltf-validator';

/** Result of a validation: counts and one line per reported issue. */
export interface ValidationSummary {
  errors: number;
  warnings: number;
  /** "<ERROR|WARNING|INFO|HINT> <code> <pointer>: <message>" per issue. */
  messages: string[];
}

const SEVERITY = ['ERROR', 'WARNING', 'INFO', 'HINT'];

/** Options: issue codes to ignore (for example IO_ERROR for images known to be absent). */
export interface ValidateOptions {
  ignoredIssues?: string[];
}

/** Validates the file at `file` and summarises the report (all issues, no limit). */
export async function validateGltfFile(file: string, options: ValidateOptions = {}): Promise<ValidationSummary> {
  const bytes = new Uint8Array(await readFile(file));
  const dir = path.dirname(path.resolve(file));
  const report: any = await validator.validateBytes(bytes, {
    uri: path.basename(file),
    maxIssues: 0,
    writeTimestamp: false,
    ignoredIssues: options.ignoredIssues ?? [],
    externalResourceFunction: (uri: string) =>
      readFile(path.resolve(dir, decodeURIComponent(uri))).then(
        (b) => new Uint8Array(b),
        (err) => Promise.reject(String(err)),
      ),
  });
  const messages = (report.issues.messages as any[]).map(
    (m) => `${SEVERITY[m.severity] ?? m.severity} ${m.code} ${m.pointer ?? ''}: ${m.message}`,
  );
  return { errors: report.issues.numErrors, warnings: report.issues.numWarnings, messages };
}
