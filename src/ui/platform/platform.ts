/**
 * The platform seam: everything the renderer needs from its host (files, reports, document state).
 * One interface, two implementations chosen by the build: `platform.web.ts` (file pickers, downloads,
 * localStorage) and `platform.electron.ts` (native dialogs and atomic writes through the preload bridge).
 */
import type { FileKind, MenuCommand, RecentFile } from './desktopBridge.ts';

export type { FileKind, MenuCommand, RecentFile };

/** A file the user picked. `handle` lets the desktop build save back to the same place. */
export interface PickedFile {
  name: string;
  text: string;
  handle: string | null;
}

/** Where something was saved (`handle` null in the browser: a download has no path). */
export interface SavedTarget {
  name: string;
  handle: string | null;
}

export interface Platform {
  /** `web` or `desktop`. */
  kind: 'web' | 'desktop';
  /** Whether the host can print a report to PDF itself. */
  canExportPdf: boolean;
  /** Whether saving can write back to the file that was opened. */
  canSaveInPlace: boolean;
  /** Asks the user for a file; null when cancelled. */
  pickFile(kind: FileKind): Promise<PickedFile | null>;
  /** Saves text: in place when `handle` is given and supported, otherwise through a save dialog or a download. */
  saveFile(req: {
    kind: FileKind;
    suggestedName: string;
    text: string;
    handle: string | null;
  }): Promise<SavedTarget | null>;
  exportReport(req: {
    html: string;
    suggestedName: string;
    format: 'html' | 'pdf';
  }): Promise<SavedTarget | null>;
  recentFiles(): Promise<RecentFile[]>;
  openRecent(handle: string): Promise<PickedFile>;
  /** Shows a saved or opened file in the system file manager (desktop only; the browser has no paths). */
  reveal: ((handle: string) => Promise<void>) | null;
  /** Tells the host about unsaved changes so closing can ask first. */
  setDocumentState(state: { dirty: boolean; title: string }): void;
  /** Menu commands from the host (desktop); returns the unsubscribe function. */
  onMenuCommand(listener: (cmd: MenuCommand) => void): () => void;
  /** Persistent storage for drafts (survives reloads and crashes). */
  drafts: DraftStorage;
}

/** Key/value text storage for autosaved drafts. */
export interface DraftStorage {
  load(key: string): string | null;
  save(key: string, text: string): void;
  remove(key: string): void;
}

/** Raised by a platform for a failed host operation; the message is for people. */
export class PlatformError extends Error {
  readonly code: string;
  constructor(code: string, message: string) {
    super(message);
    this.name = 'PlatformError';
    this.code = code;
  }
}

/** localStorage-backed drafts, tolerant of storage being full or disabled. */
export function localDrafts(storage: Storage | null, prefix = 'factor-triage:'): DraftStorage {
  return {
    load: (key) => {
      try {
        return storage?.getItem(prefix + key) ?? null;
      } catch {
        return null;
      }
    },
    save: (key, text) => {
      try {
        storage?.setItem(prefix + key, text);
      } catch {
        /* storage full or disabled: the draft stays in memory */
      }
    },
    remove: (key) => {
      try {
        storage?.removeItem(prefix + key);
      } catch {
        /* nothing stored */
      }
    },
  };
}

/** Extension used when saving each kind of file. */
export const KIND_EXTENSION: Record<FileKind, string> = {
  study: '.study.json',
  deal: '.deal.json',
  market: '.json',
  csv: '.csv',
};
