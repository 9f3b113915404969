/**
 * Runs the CLI in-process with captured streams.
 */
import { main } from '../../src/cli/main.js';

/** Captured outcome of one CLI run. */
export interface CliRun {
  code: number;
  stdout: string;
  stderr: string;
}

/** Runs `tanframe <argv...>` in `cwd` without spawning a process. */
export async function runCli(argv: string[], cwd: string, env: Record<string, string | undefined> = {}): Promise<CliRun> {
  let stdout = '';
  let stderr = '';
  const code = await main(argv, {
    stdout: (s) => { stdout += s; },
    stderr: (s) => { stderr += s; },
    cwd,
    isTTY: false,
    env,
  });
  return { code, stdout, stderr };
}
