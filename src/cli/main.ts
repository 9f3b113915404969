/**
 * The commander program and the one top-level catch that maps errors to exit statuses:
 * 0 done, 1 a gate tripped, 2 a usage or configuration error (nothing processed), 3 a file
 * that could not be processed or a report, picture or output that could not be written.
 */
import { Command, CommanderError } from 'commander';
import { TanframeError } from '../mesh/errors.js';
import { cleanText } from '../mesh/text.js';
import { registerAudit, registerBake, registerConvertMap, registerRender, registerReport } from './commands.js';
import { toolVersion, type CliIo } from './options.js';

/** The real process streams and environment. */
export function processIo(): CliIo {
  return {
    stdout: (s) => void process.stdout.write(s),
    stderr: (s) => void process.stderr.write(s),
    cwd: process.cwd(),
    isTTY: !!process.stdout.isTTY,
    env: process.env,
    stderrIsTTY: !!process.stderr.isTTY,
    stderrColumns: () => process.stderr.columns,
  };
}

/** Builds the program; `done` receives the exit status of the command that ran. */
export function buildProgram(io: CliIo, done: (code: number) => void): Command {
  const program = new Command();
  program
    .name('tanframe')
    .description('Bake standard tangent frames into glTF, GLB and OBJ meshes; audit and gate them in CI.')
    .version(toolVersion(), '-V, --version')
    .exitOverride()
    .showHelpAfterError('(run with --help for usage)')
    .configureOutput({ writeOut: io.stdout, writeErr: io.stderr });
  registerBake(program, io, done);
  registerAudit(program, io, done);
  registerConvertMap(program, io, done);
  registerReport(program, io, done);
  registerRender(program, io, done);
  for (const c of program.commands) c.exitOverride().configureOutput({ writeOut: io.stdout, writeErr: io.stderr });
  return program;
}

/**
 * Runs the CLI on `argv` (without the node and script entries). Returns the exit status;
 * never throws and never calls process.exit, so tests can run it in-process.
 */
export async function main(argv: string[], io: CliIo = processIo()): Promise<number> {
  let code = 0;
  const program = buildProgram(io, (c) => { code = c; });
  const debug = argv.includes('--debug');
  try {
    if (argv.length === 0) {
      program.outputHelp();
      return 2;
    }
    await program.parseAsync(argv, { from: 'user' });
    return code;
  } catch (err) {
    if (err instanceof CommanderError) {
      if (err.code === 'commander.helpDisplayed' || err.code === 'commander.version' || err.code === 'commander.help') return 0;
      return 2;
    }
    if (err instanceof TanframeError) {
      io.stderr(`tanframe: ${cleanText(err.message)}\n`);
      // Usage and configuration errors: nothing was processed (2); anything else is an input or
      // output that failed (3).
      return err.code === 'usage' || err.code === 'bad-config' || err.code === 'internal' || err.code === 'invalid-argument' ? 2 : 3;
    }
    const e = err as Error;
    io.stderr(`tanframe: internal error: ${cleanText(e?.message ?? String(err))}\n`);
    if (debug && e?.stack) io.stderr(e.stack + '\n');
    return 2;
  }
}
