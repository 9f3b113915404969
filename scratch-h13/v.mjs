import validator from 'gltf-validator';
import { readFile } from 'node:fs/promises';
import path from 'node:path';
for (const file of process.argv.slice(2)) {
  const bytes = new Uint8Array(await readFile(file));
  const dir = path.dirname(file);
  const r = await validator.validateBytes(bytes, { uri: path.basename(file), maxIssues: 0, externalResourceFunction: (u) => readFile(path.resolve(dir, decodeURIComponent(u))).then((b) => new Uint8Array(b)) });
  console.log(file, 'errors', r.issues.numErrors, 'warnings', r.issues.numWarnings);
  for (const m of r.issues.messages) if (m.severity <= 1) console.log('  ', m.severity, m.code, m.pointer, m.message);
}
