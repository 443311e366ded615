/** Types of shellHandlers.cjs. */
import type * as fsModule from 'node:fs';
import type { RecentFile } from './recentFiles.cjs';
export interface ShellServices {
  showOpenDialog(o: {
    title: string;
    filters: { name: string; extensions: string[] }[];
  }): Promise<string | null>;
  showSaveDialog(o: {
    title: string;
    defaultName: string;
    filters: { name: string; extensions: string[] }[];
  }): Promise<string | null>;
  fs: typeof fsModule;
  revealInFolder(path: string): void;
  printToPdf(html: string): Promise<Buffer>;
  loadRecent(): RecentFile[];
  storeRecent(list: RecentFile[]): void;
  setDocumentState(state: { dirty: boolean; title: string }): void;
  now(): number;
}
export declare const KIND_FILTERS: Record<string, { name: string; extensions: string[]; ext: string }>;
export declare function createShellHandlers(svc: ShellServices): {
  granted: Set<string>;
  handle(channel: string, arg: unknown): Promise<any>;
};
