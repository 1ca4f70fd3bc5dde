#!/usr/bin/env node
// `brinkwatch analyze FILE …` (also `npm run analyze -- FILE …`): the engine's command line. It runs from a bundle
// built ahead of time into dist/ by esbuild, so a start costs no TypeScript transpiling; the bundle is rebuilt
// (about 0.1 s) whenever one of the files it was built from is newer than it, so a source edit is never ignored.
import { existsSync, mkdirSync, readFileSync, renameSync, statSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const DIST = path.join(ROOT, 'dist');
/** Each command's entry and bundle; the surrogate worker thread is bundled beside it, where the pool looks for it. */
const COMMANDS = {
  analyze: { entry: 'scripts/analyze.ts', bundle: 'analyze.mjs', workers: { 'surrogate-worker.mjs': 'lib/engine/surrogate-thread.ts' } },
};
const USAGE = `usage: brinkwatch <command> …\ncommands: ${Object.keys(COMMANDS).join(', ')} (e.g. brinkwatch analyze FILE.csv --summary)`;

function stale(manifest) {
  if (!existsSync(manifest)) return true;
  const { builtAt, inputs } = JSON.parse(readFileSync(manifest, 'utf8'));
  return inputs.some((file) => {
    try {
      return statSync(path.join(ROOT, file)).mtimeMs > builtAt;
    } catch {
      return true;
    }
  });
}

async function build(command, manifest) {
  const { build: esbuild } = await import('esbuild');
  mkdirSync(DIST, { recursive: true });
  const inputs = new Set();
  const builtAt = Date.now();
  const entries = { [command.bundle]: command.entry, ...command.workers };
  for (const [name, entry] of Object.entries(entries)) {
    const target = path.join(DIST, name);
    const temp = `${target}.${process.pid}.tmp`;
    const result = await esbuild({
      entryPoints: [path.join(ROOT, entry)],
      outfile: temp,
      bundle: true,
      platform: 'node',
      format: 'esm',
      target: 'node20',
      metafile: true,
      logLevel: 'error',
      absWorkingDir: ROOT,
      tsconfig: path.join(ROOT, 'tsconfig.json'),
      // Bundled CommonJS packages (papaparse) call require; give the ES module one.
      banner: { js: "import { createRequire as __bwCreateRequire } from 'node:module'; const require = __bwCreateRequire(import.meta.url);" },
    });
    for (const file of Object.keys(result.metafile.inputs)) inputs.add(file);
    // Renamed into place so a second command starting meanwhile never loads a half-written bundle.
    renameSync(temp, target);
  }
  writeFileSync(`${manifest}.${process.pid}.tmp`, JSON.stringify({ builtAt, inputs: [...inputs] }));
  renameSync(`${manifest}.${process.pid}.tmp`, manifest);
}

const [name, ...rest] = process.argv.slice(2);
const command = COMMANDS[name];
if (!command) {
  process.stderr.write(`${USAGE}\n`);
  process.exit(2);
}
const manifest = path.join(DIST, `${name}.inputs.json`);
if (stale(manifest)) await build(command, manifest);
// The bundled command reads its own arguments from process.argv, as when run directly.
process.argv = [process.argv[0], path.join(DIST, command.bundle), ...rest];
await import(pathToFileURL(path.join(DIST, command.bundle)).href);
