#!/usr/bin/env node
// Fieldkiln's command-line entry point. The TypeScript sources are compiled to build/ by `npm install`
// (the `prepare` script) or `npm run build`.
import { existsSync } from 'node:fs';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { dirname, join } from 'node:path';

const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const entry = join(root, 'build', 'app', 'cli', 'main.js');
if (!existsSync(entry)) {
  process.stderr.write(`fieldkiln: the build is missing (${entry}); run 'npm run build' in ${root}\n`);
  process.exit(70);
}
const { main } = await import(pathToFileURL(entry).href);
process.exit(await main(process.argv.slice(2)));
