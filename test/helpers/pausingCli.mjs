// A CLI process for kill tests: runs src/cli/main.ts (through the TypeScript hooks) with a
// write hook that, at the moment TANFRAME_TEST_PAUSE names ('before-main' or 'after-main'
// rename of an asset's main file), writes the main file's path to TANFRAME_TEST_MARKER and
// then waits forever, so the test can kill the process at exactly that point. Tests only.
import { writeFileSync } from 'node:fs';
import { register } from 'node:module';

register(new URL('./tsLoader.mjs', import.meta.url));
const { writeHooks } = await import(new URL('../../src/io/files.ts', import.meta.url).href);
const { main } = await import(new URL('../../src/cli/main.ts', import.meta.url).href);

const pause = async (main) => {
  writeFileSync(process.env.TANFRAME_TEST_MARKER, main);
  await new Promise(() => setInterval(() => {}, 1000));
};
if (process.env.TANFRAME_TEST_PAUSE === 'before-main') writeHooks.beforeMainRename = pause;
if (process.env.TANFRAME_TEST_PAUSE === 'after-main') writeHooks.afterMainRename = pause;
process.exitCode = await main(process.argv.slice(2));
