/**
 * The platform of this build. The type checker and the browser build see the web implementation; the
 * desktop build (`vite build --mode desktop`) swaps this module for platform.electron.ts (see vite.config.ts).
 */
export { platform } from './platform.web.ts';
