/** Types of security.cjs (the window options, CSP and URL checks of the desktop shell). */
export declare const APP_SCHEME: 'app';
export declare const APP_HOST: 'factor-triage';
export declare const APP_ORIGIN: string;
export declare function contentSecurityPolicy(): string;
export interface ShellWebPreferences {
  preload?: string;
  contextIsolation: boolean;
  nodeIntegration: boolean;
  nodeIntegrationInWorker?: boolean;
  nodeIntegrationInSubFrames?: boolean;
  sandbox: boolean;
  webSecurity: boolean;
  allowRunningInsecureContent: boolean;
  webviewTag: boolean;
  navigateOnDragDrop?: boolean;
  spellcheck?: boolean;
  safeDialogs?: boolean;
  javascript?: boolean;
}
export interface ShellWindowOptions {
  width: number;
  height: number;
  minWidth?: number;
  minHeight?: number;
  show: boolean;
  title?: string;
  backgroundColor?: string;
  webPreferences: ShellWebPreferences;
}
export declare function mainWindowOptions(opts: { preloadPath: string }): ShellWindowOptions;
export declare function printWindowOptions(): ShellWindowOptions;
export declare function isAppUrl(url: string): boolean;
export declare function resolveAppFile(
  url: string,
  root: string,
  pathApi: { join: (...p: string[]) => string; resolve: (...p: string[]) => string; sep: string },
): string | null;
export declare function mimeType(file: string): string;
