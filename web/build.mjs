// Bundles the night view into src/Triage.Api/wwwroot/app/ (committed, so the service needs no
// Node at run time and loads nothing from the internet). Run: npm ci && npm run build
import { build } from 'esbuild';
import { fileURLToPath } from 'node:url';
import path from 'node:path';

const here = path.dirname(fileURLToPath(import.meta.url));
const out = path.join(here, '..', 'src', 'Triage.Api', 'wwwroot', 'app');

await build({
  entryPoints: { 'night-view': path.join(here, 'src', 'main.js'), 'night-view-style': path.join(here, 'src', 'style.css') },
  bundle: true,
  format: 'esm',
  target: ['es2022'],
  minify: true,
  legalComments: 'eof',
  sourcemap: false,
  outdir: out,
  logLevel: 'info',
});
