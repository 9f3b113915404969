// Worker-thread entry for tests: registers the TypeScript hooks, then runs src/cli/worker.ts.
import { register } from 'node:module';

register(new URL('./tsLoader.mjs', import.meta.url));
await import(new URL('../../src/cli/worker.ts', import.meta.url).href);
