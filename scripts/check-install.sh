#!/usr/bin/env bash
# Install checks, each from a fresh copy of the repository (the files a clone holds: no
# node_modules/, no dist/) in a clean temporary folder, as a new user meets the package:
#   1. the README's first command on a fresh clone: npm install && npm run demo
#   2. npm pack, then the tarball installed into an empty project: no npm warnings, no install
#      scripts, npx tanframe --version and an audit run, require('tanframe'), and TypeScript
#      strict consumers of tanframe/frames (with no @types/node anywhere) and of tanframe,
#      compiled with the project's tsc
#   3. a git install (git+file:// of a fresh copy) into an empty project
#   4. the README's CI recipe run as written (its sh block), over a fresh clone at tools/tanframe,
#      with npm's global prefix inside the temporary folder
# Needs no network beyond the npm registry. Run by .ci/run after the tests; by hand:
# scripts/check-install.sh (from anywhere; KEEP=1 keeps the temporary folder).
set -euo pipefail
repo="$(cd "$(dirname "$0")/.." && pwd)"
work="$(mktemp -d "${TMPDIR:-/tmp}/tanframe-install-XXXXXX")"
if [ "${KEEP:-0}" = 1 ]; then echo "check-install: working in $work (kept)"; else trap 'rm -rf "$work"' EXIT; fi
export npm_config_fund=false npm_config_audit=false npm_config_update_notifier=false npm_config_loglevel=warn
version="$(node -p "require('$repo/package.json').version")"
types_node="$(node -p "require('$repo/package.json').devDependencies['@types/node']")"

step() { printf '\ncheck-install: %s\n' "$*"; }
fail() { printf 'check-install: FAILED: %s\n' "$*" >&2; exit 1; }

# A fresh copy: what `git clone` of the current tree would hold (tracked and new files that
# are not ignored; no node_modules/, dist/ or out/).
fresh_copy() {
  mkdir -p "$1"
  (cd "$repo" && git ls-files -z --cached --others --exclude-standard) |
    (cd "$repo" && while IFS= read -r -d '' f; do [ -e "$f" ] && printf '%s\0' "$f"; done) |
    (cd "$repo" && xargs -0 cp --parents -t "$1")
}

# Runs an npm command, echoes its output, and fails on any npm warning in it.
npm_quiet() {
  local log="$work/npm.log"
  if ! npm "$@" >"$log" 2>&1; then cat "$log"; fail "npm $*"; fi
  cat "$log"
  if grep -i '^npm warn' "$log" >/dev/null; then fail "npm $* printed warnings"; fi
}

step "1. README: npm install && npm run demo on a fresh clone"
fresh_copy "$work/clone"
(cd "$work/clone" && [ ! -e dist ] && [ ! -e node_modules ]) || fail "the fresh copy holds dist/ or node_modules/"
(cd "$work/clone" && npm_quiet install && npm run demo >"$work/demo.log" 2>&1) || { cat "$work/demo.log"; fail "npm install && npm run demo"; }
ls "$work/clone/out/harbor-props/buoy/buoy.glb" "$work/clone/out/harbor-props-report.json" >/dev/null || fail "the demo wrote no output"

step "2. npm pack, installed into an empty project"
tarball="$(cd "$work/clone" && npm pack --silent --pack-destination "$work")"
tarball="$work/$tarball"
listing="$(tar -tzf "$tarball")"
for f in package/dist/index.js package/dist/index.d.ts package/dist/frames/index.js package/dist/frames/index.d.ts \
  package/dist/cli/index.js package/dist/cli/worker.js package/bin/tanframe.js package/README.md package/LICENSE; do
  grep -qx "$f" <<<"$listing" || fail "the tarball lacks $f"
done
if [ -d "$repo/schema" ]; then grep -q '^package/schema/' <<<"$listing" || fail "the tarball lacks schema/"; fi
if grep -E '^package/(src|test|scripts|fixtures|examples)/' <<<"$listing" >/dev/null; then fail "the tarball ships development files"; fi
tar -xzOf "$tarball" package/package.json | node -e "
  const p = JSON.parse(require('fs').readFileSync(0, 'utf8'));
  const bad = ['preinstall', 'install', 'postinstall', 'prepare'].filter((k) => p.scripts && p.scripts[k]);
  if (bad.length) { console.error('install-time scripts: ' + bad.join(', ')); process.exit(1); }
" || fail "the package runs scripts at install"

mkdir -p "$work/consumer" && cd "$work/consumer"
printf '{ "name": "consumer", "version": "1.0.0", "private": true, "type": "module" }\n' >package.json
npm_quiet install "$tarball"
[ "$(npx --no-install tanframe --version)" = "$version" ] || fail "npx tanframe --version did not print $version"
set +e
npx --no-install tanframe audit "$work/clone/examples/harbor-props" --quiet --report audit.json
status=$?
set -e
[ "$status" = 0 ] || fail "tanframe audit of the demo exited $status"
node -e "const r = require('./audit.json'); if (r.summary.files !== 6 || r.summary.failed !== 0) process.exit(1)" || fail "the audit report is not the demo's"
node -e "const t = require('tanframe'); if (typeof t.computeFrames !== 'function') process.exit(1)" || fail "require('tanframe')"
[ "$(ls node_modules/.bin)" = "tanframe" ] || fail "the install added commands other than tanframe: $(ls node_modules/.bin | tr '\n' ' ')"
[ ! -e node_modules/@types/node ] || fail "the install brought @types/node"
echo "installed: $(du -sh node_modules | cut -f1), $(npm ls --all --parseable | tail -n +2 | wc -l) packages"

cat >frames-consumer.ts <<'EOF'
import { computeFrames, TanframeError, type FrameInput, type FrameResult } from 'tanframe/frames';
const input: FrameInput = {
  positions: new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0]),
  normals: new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1]),
  uvs: new Float32Array([0, 0, 1, 0, 0, 1]),
};
const r: FrameResult = computeFrames(input, { method: 'mikktspace', uvOrigin: 'top-left' });
export const w: number = r.tangents[3];
export const code: string = new TanframeError('invalid-argument', 'x').code;
EOF
cat >main-consumer.ts <<'EOF'
import { readAssetBytes, solveAsset, encodeGltf, defaultProcessOptions, type Asset, type EncodeOptions, type OutputFile, type ReadLimits } from 'tanframe';
import { main } from 'tanframe/cli';
import { readFile } from 'node:fs/promises';
const limits: ReadLimits = { maxTriangles: 1000 };
export async function bake(file: string): Promise<OutputFile[]> {
  const asset: Asset = await readAssetBytes(new Uint8Array(await readFile(file)), 'buoy.glb', undefined, limits);
  const options: EncodeOptions = { format: 'glb', outPath: 'buoy.glb' };
  return encodeGltf(asset, solveAsset(asset, defaultProcessOptions()).replacements, options);
}
export const run: (argv: string[]) => Promise<number> = (argv) => main(argv);
EOF
tsc="$work/clone/node_modules/.bin/tsc"
common='"strict": true, "noEmit": true, "target": "ES2022", "module": "NodeNext", "moduleResolution": "NodeNext", "lib": ["ES2022"], "skipLibCheck": false'
printf '{ "compilerOptions": { %s, "types": [] }, "files": ["frames-consumer.ts"] }\n' "$common" >tsconfig.frames.json
"$tsc" -p tsconfig.frames.json || fail "a strict consumer of tanframe/frames does not compile without @types/node"
npm_quiet install --no-save "@types/node@$types_node"
printf '{ "compilerOptions": { %s, "types": ["node"] }, "files": ["main-consumer.ts"] }\n' "$common" >tsconfig.main.json
"$tsc" -p tsconfig.main.json || fail "a strict consumer of tanframe does not compile"
echo "TypeScript consumers of tanframe/frames (no @types/node) and tanframe compile (strict)"

step "3. git install into an empty project"
fresh_copy "$work/gitsrc"
(cd "$work/gitsrc" && git init -q && git add -A && git -c user.name=check -c user.email=check@localhost commit -qm snapshot)
mkdir -p "$work/gitconsumer" && cd "$work/gitconsumer"
printf '{ "name": "gitconsumer", "version": "1.0.0", "private": true }\n' >package.json
npm_quiet install "git+file://$work/gitsrc"
[ "$(npx --no-install tanframe --version)" = "$version" ] || fail "tanframe from a git install"

step "4. README CI recipe, as written, on a fresh clone"
mkdir -p "$work/ci/tools" "$work/ci/assets"
fresh_copy "$work/ci/tools/tanframe"
cp -R "$work/clone/examples/harbor-props/." "$work/ci/assets/"
awk '/^## CI recipe/{f=1} f&&/^```sh$/{g=1;next} g&&/^```$/{exit} g{print}' "$repo/README.md" >"$work/ci/recipe.sh"
grep -q 'npm install --global' "$work/ci/recipe.sh" || fail "no CI recipe found in README.md"
cd "$work/ci"
set +e
npm_config_prefix="$work/global" PATH="$work/global/bin:$PATH" sh recipe.sh >"$work/recipe.log" 2>&1
status=$?
set -e
cat "$work/recipe.log"
if grep -i '^npm warn' "$work/recipe.log" >/dev/null; then fail "the CI recipe's installs printed warnings"; fi
# The demo's lobster trap has collapsed UVs: the degenerate-uv gate trips (status 1).
[ "$status" = 1 ] || fail "the CI recipe exited $status (expected 1: the demo trips degenerate-uv)"
for f in reports/tanframe.json reports/tanframe-junit.xml reports/tanframe.html; do [ -s "$f" ] || fail "the CI recipe wrote no $f"; done
[ -n "$(ls reports/uv-maps)" ] || fail "the CI recipe wrote no UV maps"

printf '\ncheck-install: all install checks passed\n'
