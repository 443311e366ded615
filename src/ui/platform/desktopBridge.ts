/**
 * The one API the desktop preload exposes to the renderer (as `window.factorTriage`), shared by the
 * preload (checked with `satisfies` in app/preload.cjs) and the renderer's desktop platform.
 * Every call returns a plain result: the shell never throws across the bridge.
 */

/** What a file holds; chooses the dialog filters and the default extension. */
export type FileKind = 'study' | 'deal' | 'market' | 'csv';

/** A problem the shell reports; `field` names the argument at fault when there is one. */
export interface BridgeError {
  code: string;
  field: string;
  message: string;
}

export type BridgeResult<T> = { ok: true; value: T } | { ok: false; error: BridgeError };

/** A file read from disk. `path` may be passed back to `save` and `reveal` for this session. */
export interface OpenedFile {
  path: string;
  name: string;
  text: string;
}

/** Where a file was written. */
export interface SavedFile {
  path: string;
  name: string;
}

export interface RecentFile {
  path: string;
  name: string;
  kind: FileKind;
  /** Milliseconds since 1970 when it was last opened or saved. */
  at: number;
}

/** Menu items forwarded from the native menu to the renderer. */
export type MenuCommand = 'open' | 'save' | 'save-as' | 'export-html' | 'export-pdf';

export interface DesktopBridge {
  /** Shows an open dialog; `null` when the user cancels. */
  openFile(req: { kind: FileKind }): Promise<BridgeResult<OpenedFile | null>>;
  /** Re-opens a file from the recent list. */
  openRecent(req: { path: string }): Promise<BridgeResult<OpenedFile>>;
  /** Writes atomically to a path the user chose earlier in this session (open, save-as or recent). */
  save(req: { path: string; text: string }): Promise<BridgeResult<SavedFile>>;
  /** Shows a save dialog and writes atomically; `null` when the user cancels. */
  saveAs(req: {
    kind: FileKind;
    suggestedName: string;
    text: string;
  }): Promise<BridgeResult<SavedFile | null>>;
  recentFiles(): Promise<BridgeResult<RecentFile[]>>;
  /** Prints the self-contained report HTML to a PDF chosen in a save dialog. */
  exportReportPdf(req: { html: string; suggestedName: string }): Promise<BridgeResult<SavedFile | null>>;
  /** Saves the self-contained report HTML through a save dialog. */
  exportReportHtml(req: { html: string; suggestedName: string }): Promise<BridgeResult<SavedFile | null>>;
  /** Shows a file the user opened or saved in the system file manager. */
  reveal(req: { path: string }): Promise<BridgeResult<null>>;
  /** Tells the shell whether there are unsaved changes, so closing the window can ask first. */
  setDocumentState(req: { dirty: boolean; title: string }): Promise<BridgeResult<null>>;
  /** Subscribes to native menu commands; returns the unsubscribe function. */
  onMenuCommand(listener: (cmd: MenuCommand) => void): () => void;
}

/** IPC channel of each request method (the preload and the main process both read this table). */
export const BRIDGE_CHANNELS = {
  openFile: 'ft:open-file',
  openRecent: 'ft:open-recent',
  save: 'ft:save',
  saveAs: 'ft:save-as',
  recentFiles: 'ft:recent-files',
  exportReportPdf: 'ft:export-pdf',
  exportReportHtml: 'ft:export-html',
  reveal: 'ft:reveal',
  setDocumentState: 'ft:document-state',
} as const satisfies Record<Exclude<keyof DesktopBridge, 'onMenuCommand'>, string>;

/** Channel the main process uses to forward menu commands. */
export const MENU_CHANNEL = 'ft:menu';
