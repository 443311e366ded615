/** Types of ipc.cjs (validation of the renderer's requests). */
export interface CheckedOk<T = any> {
  ok: true;
  value: T;
}
export interface CheckedBad {
  ok: false;
  error: { code: string; field: string; message: string };
}
export type Checked<T = any> = CheckedOk<T> | CheckedBad;
export declare const CHANNELS: {
  openFile: string;
  openRecent: string;
  save: string;
  saveAs: string;
  recentFiles: string;
  exportReportPdf: string;
  exportReportHtml: string;
  reveal: string;
  setDocumentState: string;
};
export declare const MENU_CHANNEL: string;
export declare const FILE_KINDS: string[];
export declare const MAX_TEXT: number;
export declare function validateRequest(
  channel: string,
  arg: unknown,
  ctx: { granted: Set<string>; isAbsolute: (p: string) => boolean },
): Checked;
export declare function validateSender(
  senderUrl: string | undefined,
  isAppUrl: (url: string) => boolean,
): Checked;
export declare function checkSuggestedName(v: unknown, field?: string): Checked;
export declare function checkGrantedPath(
  v: unknown,
  granted: Set<string>,
  isAbsolute: (p: string) => boolean,
  field?: string,
): Checked;
