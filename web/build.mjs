// Bundles the night view into src/Triage.Api/wwwroot/app/ (committed, so the service needs no
// Node at run time and loads nothing from the internet). Run: npm ci && npm run build
import { build } from 'esbuild';
import { fileURLToPath } from 'node:url';
import path from 'node:path';
import { readFileSync, copyFileSync } from 'node:fs';

const here = path.dirname(fileURLToPath(import.meta.url));
const uplot = JSON.parse(readFileSync(path.join(here, 'node_modules', 'uplot', 'package.json'), 'utf8'));
const copyright = readFileSync(path.join(here, 'node_modules', 'uplot', 'LICENSE'), 'utf8').split('\n').find((l) => l.includes('Copyright'))?.trim();
const out = path.join(here, '..', 'src', 'Triage.Api', 'wwwroot', 'app');

await build({
  entryPoints: { 'night-view': path.join(here, 'src', 'main.js'), 'night-view-style': path.join(here, 'src', 'style.css') },
  bundle: true,
  format: 'esm',
  target: ['es2022'],
  minify: true,
  legalComments: 'eof',
  sourcemap: false,
  banner: { js: `/* Triage night view. Bundles uPlot ${uplot.version} (${uplot.license}; ${copyright}). Licence: /app/uplot-LICENSE.txt. Sources: web/src. */` },
  outdir: out,
  logLevel: 'info',
});

// uPlot's licence travels with the bundle that contains it.
copyFileSync(path.join(here, 'node_modules', 'uplot', 'LICENSE'), path.join(out, 'uplot-LICENSE.txt'));
