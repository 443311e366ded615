/**
 * Build of the renderer. `npm run web` serves it for development; `npm run build:web` writes dist/web
 * (browser file pickers and downloads). `vite build --mode desktop` writes dist/desktop for the Electron
 * shell (native dialogs through the preload bridge). The platform implementation is chosen here, by alias.
 */
import { defineConfig, type Plugin } from 'vite';
import react from '@vitejs/plugin-react';
import { fileURLToPath } from 'node:url';
import path from 'node:path';

const here = path.dirname(fileURLToPath(import.meta.url));

/** Same policy as the desktop shell (app/lib/security.cjs), as a meta tag, for built pages only. */
const CSP = [
  "default-src 'none'",
  "script-src 'self'",
  "style-src 'self'",
  "img-src 'self' data: blob:",
  "font-src 'self'",
  "connect-src 'self'",
  "worker-src 'self'",
  "frame-src 'none'",
  "object-src 'none'",
  "base-uri 'none'",
  "form-action 'none'",
].join('; ');

function cspMeta(): Plugin {
  return {
    name: 'factor-triage-csp',
    apply: 'build',
    transformIndexHtml: (html) =>
      html.replace('<head>', `<head>\n    <meta http-equiv="Content-Security-Policy" content="${CSP}" />`),
  };
}

export default defineConfig(({ mode }) => {
  const desktop = mode === 'desktop';
  return {
    root: path.join(here, 'src/ui'),
    base: './',
    publicDir: false,
    plugins: [react(), cspMeta()],
    resolve: {
      alias: desktop
        ? [
            {
              find: /^.*\/platform\/current\.ts$/,
              replacement: path.join(here, 'src/ui/platform/platform.electron.ts'),
            },
          ]
        : [],
    },
    worker: { format: 'es' },
    server: { host: '127.0.0.1', fs: { allow: [here] } },
    build: {
      outDir: path.join(here, 'dist', desktop ? 'desktop' : 'web'),
      emptyOutDir: true,
      target: 'es2022',
      chunkSizeWarningLimit: 2500,
      sourcemap: false,
    },
  };
});
