/** Types of recentFiles.cjs. */
import type * as fsModule from 'node:fs';
export interface RecentFile {
  path: string;
  name: string;
  kind: 'study' | 'deal' | 'market' | 'csv';
  at: number;
}
export declare const MAX_RECENT: number;
export declare function addRecent(list: RecentFile[], entry: RecentFile, max?: number): RecentFile[];
export declare function removeRecent(list: RecentFile[], path: string): RecentFile[];
export declare function parseRecent(text: string): RecentFile[];
export declare function serializeRecent(list: RecentFile[]): string;
export declare function loadRecent(file: string, fs: typeof fsModule): RecentFile[];
export declare function storeRecent(file: string, list: RecentFile[], fs?: typeof fsModule): void;
