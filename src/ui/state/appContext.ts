/** What every screen can reach: the document, the engine, the platform, and the long-running task. */
import { createContext, useContext, type Dispatch } from 'react';
import type { ApiError, EngineClient, ProgressReport, VerifyOutcome } from '../../engine/api/index.ts';
import type { Platform } from '../platform/platform.ts';
import type { DocumentAction, StudyDocument } from './document.ts';

/** The one long task at a time (a study run or a verification), with its progress. */
export type TaskState =
  | { kind: 'idle' }
  | { kind: 'running'; op: 'run' | 'verify'; progress: ProgressReport; startedAt: number }
  | { kind: 'cancelled'; op: 'run' | 'verify' }
  | { kind: 'failed'; op: 'run' | 'verify'; error: ApiError }
  | { kind: 'verified'; outcome: VerifyOutcome };

export interface Notice {
  id: number;
  tone: 'info' | 'success' | 'error';
  text: string;
}

export interface AppApi {
  doc: StudyDocument;
  dispatch: Dispatch<DocumentAction>;
  engine: EngineClient;
  platform: Platform;
  task: TaskState;
  notify(tone: Notice['tone'], text: string): void;
  runStudy(): void;
  verifyStudy(): void;
  cancelTask(): void;
  openStudyFile(): Promise<void>;
  /** Opens study text (from a file, a recent entry or the bundled demo). */
  openStudyText(name: string, text: string, handle: string | null): Promise<boolean>;
  saveStudy(saveAs: boolean): Promise<void>;
  exportReport(format: 'html' | 'pdf'): Promise<void>;
  /** Prints the report: a PDF file through the desktop shell, or the browser's print dialog on a print view. */
  printReport(): Promise<void>;
  /** Methods the engine worker serves (e.g. whether studies can run in this build). */
  served: Set<string>;
}

export const AppContext = createContext<AppApi | null>(null);

export function useApp(): AppApi {
  const a = useContext(AppContext);
  if (!a) throw new Error('useApp outside the application');
  return a;
}

/** Message of an error coming back from the engine or the platform. */
export function errorText(e: unknown): string {
  if (e && typeof e === 'object' && 'message' in e) return String((e as { message: unknown }).message);
  return String(e);
}
