/**
 * The shipped JSON Schemas (schema/ in the package) compiled with ajv (JSON Schema draft
 * 2020-12), and checks that a report or a config matches them. runCli (cli.ts) checks every
 * JSON report an in-process run writes, so every report the suite writes is validated.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import Ajv2020 from 'ajv/dist/2020.js';

const repo = path.resolve(__dirname, '../..');
export const REPORT_SCHEMA_FILE = path.join(repo, 'schema', 'tanframe-report-1.schema.json');
export const CONFIG_SCHEMA_FILE = path.join(repo, 'schema', 'tanframe-config-1.schema.json');

// strict: an unknown keyword or a bad schema fails at compile time, so the schema itself is checked.
const ajv = new Ajv2020({ allErrors: true, strict: true, allowUnionTypes: true });
const reportValidator = ajv.compile(JSON.parse(fs.readFileSync(REPORT_SCHEMA_FILE, 'utf8')));
const configValidator = ajv.compile(JSON.parse(fs.readFileSync(CONFIG_SCHEMA_FILE, 'utf8')));

function check(validate: typeof reportValidator, value: unknown): string[] {
  if (validate(value)) return [];
  return (validate.errors ?? []).map((e) => `${e.instancePath || '/'} ${e.message ?? ''} ${JSON.stringify(e.params)}`);
}

/** Errors of `report` against tanframe-report/1 (empty when it is valid). */
export function reportSchemaErrors(report: unknown): string[] {
  return check(reportValidator, report);
}

/** Errors of `config` against tanframe-config/1 (empty when it is valid). */
export function configSchemaErrors(config: unknown): string[] {
  return check(configValidator, config);
}

/** Throws naming `where` and the first errors when `report` does not match the schema. */
export function assertValidReport(report: unknown, where: string): void {
  const errors = reportSchemaErrors(report);
  if (errors.length) throw new Error(`${where}: the report does not match schema/tanframe-report-1.schema.json:\n  ${errors.slice(0, 10).join('\n  ')}`);
}

/** The report files a CLI command line names: after `--report` (bake, audit) or `--json <file>` (report). */
export function reportFilesOf(argv: string[]): string[] {
  const valueOf = (flag: string): string | null => {
    for (let i = 0; i < argv.length; i++) {
      if (argv[i] === flag && i + 1 < argv.length) return argv[i + 1];
      if (argv[i].startsWith(flag + '=')) return argv[i].slice(flag.length + 1);
    }
    return null;
  };
  const command = argv[0];
  const file = command === 'bake' || command === 'audit' ? valueOf('--report') : command === 'report' ? valueOf('--json') : null;
  return file ? [file] : [];
}

/** The bytes of the report files `argv` names, before a run (null: absent), to tell what the run wrote. */
export function snapshotReports(argv: string[], cwd: string): Map<string, string | null> {
  const out = new Map<string, string | null>();
  for (const f of reportFilesOf(argv)) {
    const abs = path.resolve(cwd, f);
    out.set(abs, fs.existsSync(abs) ? fs.readFileSync(abs, 'latin1') : null);
  }
  return out;
}

/**
 * Checks the JSON reports a CLI run wrote: the report file its command line names, when the
 * run wrote it (its bytes differ from `before`, taken by snapshotReports; without `before`,
 * whenever it exists), and stdout when `--json` printed the report there.
 */
export function assertReportsOf(argv: string[], cwd: string, stdout: string, before?: Map<string, string | null>): void {
  const command = argv[0];
  if ((command === 'bake' || command === 'audit') && argv.includes('--json') && stdout.trim().startsWith('{')) {
    assertValidReport(JSON.parse(stdout), `tanframe ${argv.join(' ')} (stdout)`);
  }
  for (const f of reportFilesOf(argv)) {
    const abs = path.resolve(cwd, f);
    if (!fs.existsSync(abs)) continue;
    if (before && before.get(abs) === fs.readFileSync(abs, 'latin1')) continue; // not written by this run
    assertValidReport(JSON.parse(fs.readFileSync(abs, 'utf8')), `tanframe ${argv.join(' ')} (${f})`);
  }
}
