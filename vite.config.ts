/**
 * Build of the renderer. `npm run web` serves it for development; `npm run build:web` writes dist/web
 * (browser file pickers and downloads). `vite build --mode desktop` writes dist/desktop for the Electron
 * shell (native dialogs through the preload bridge). The platform implementation is chosen here, by alias.
 */
import { defineConfig, type Plugin } from 'vite';
import react from '@vitejs/plugin-react';
import { fileURLToPath } from 'node:url';
import path from 'node:path';
import fs from 'node:fs';

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
      html.replace(
        '<meta charset="utf-8" />',
        `<meta charset="utf-8" />\n    <meta http-equiv="Content-Security-Policy" content="${CSP}" />`,
      ),
  };
}

/**
 * The engine names modules it may load at run time (payoff factories of the simulation runner) by
 * `new URL('./module.ts', import.meta.url)`. Left alone, a build would inline each TypeScript source as an asset
 * URL. Here each such reference becomes a stable name (`ft-module:<path>`), and where the generic runner loader
 * `import(specifier)` is part of the bundle it first looks the name up in a table of ordinary code-split imports.
 * (The study binds its factories statically and keys them by the same names, so both paths agree.)
 */
function engineModuleUrls(): Plugin {
  const engineDir = path.join(here, 'src', 'engine');
  const urlPattern = /new URL\(\s*'(\.\/[\w.-]+\.ts)'\s*,\s*import\.meta\.url\s*\)/g;
  const loaderPattern = /import\(\s*\/\*\s*@vite-ignore\s*\*\/\s*specifier\s*\)/;
  const modules = new Map<string, string>();
  const scan = (dir: string): void => {
    for (const f of fs.readdirSync(dir, { withFileTypes: true })) {
      const p = path.join(dir, f.name);
      if (f.isDirectory()) scan(p);
      else if (f.name.endsWith('.ts'))
        for (const m of fs.readFileSync(p, 'utf8').matchAll(urlPattern)) {
          const target = path.resolve(path.dirname(p), m[1]!);
          // Node-only adapters (*.node.ts) are never loaded in a browser.
          if (!target.endsWith('.node.ts'))
            modules.set(`ft-module:${path.relative(engineDir, target).split(path.sep).join('/')}`, target);
        }
    }
  };
  return {
    name: 'factor-triage-engine-module-urls',
    apply: 'build',
    enforce: 'pre',
    buildStart() {
      modules.clear();
      scan(engineDir);
    },
    transform(code, id) {
      if (!id.startsWith(engineDir + path.sep)) return null;
      let out = code;
      if (out.includes('import.meta.url'))
        out = out.replace(urlPattern, (_all, rel: string) => {
          const target = path.resolve(path.dirname(id), rel);
          return `new URL(${JSON.stringify(`ft-module:${path.relative(engineDir, target).split(path.sep).join('/')}`)})`;
        });
      if (loaderPattern.test(out)) {
        const table = [...modules]
          .map(([k, v]) => `${JSON.stringify(k)}: () => import(${JSON.stringify(v)})`)
          .join(',\n  ');
        out =
          out.replace(loaderPattern, '__ftLoadModule(specifier)') +
          `\nconst __ftModules = {\n  ${table}\n};\n` +
          'function __ftLoadModule(s) { const f = __ftModules[s]; return f ? f() : import(/* @vite-ignore */ s); }\n';
      }
      return out === code ? null : { code: out, map: null };
    },
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
    worker: { format: 'es', plugins: () => [engineModuleUrls()] },
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
