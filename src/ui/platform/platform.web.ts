/** Browser implementation of the platform seam: file input pickers, downloads and localStorage drafts. */
import { KIND_EXTENSION, localDrafts, type FileKind, type PickedFile, type Platform } from './platform.ts';

const ACCEPT: Record<FileKind, string> = {
  study: '.json,application/json',
  deal: '.json,application/json',
  market: '.json,application/json',
  csv: '.csv,.txt,text/csv,text/plain',
};

function pick(kind: FileKind): Promise<PickedFile | null> {
  return new Promise((resolve, reject) => {
    const input = document.createElement('input');
    input.type = 'file';
    input.accept = ACCEPT[kind];
    input.style.display = 'none';
    input.dataset['pick'] = kind;
    document.body.appendChild(input);
    const done = (): void => input.remove();
    input.addEventListener('change', () => {
      const f = input.files?.[0];
      done();
      if (!f) return resolve(null);
      f.text().then((text) => resolve({ name: f.name, text, handle: null }), reject);
    });
    input.addEventListener('cancel', () => {
      done();
      resolve(null);
    });
    input.click();
  });
}

function download(name: string, text: string, type: string): void {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  a.rel = 'noopener';
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

function withExt(name: string, ext: string): string {
  return name.toLowerCase().endsWith(ext) ? name : name + ext;
}

export const platform: Platform = {
  kind: 'web',
  canExportPdf: false,
  canSaveInPlace: false,
  pickFile: pick,
  async saveFile({ kind, suggestedName, text }) {
    const name = withExt(suggestedName, KIND_EXTENSION[kind]);
    download(name, text, kind === 'csv' ? 'text/csv' : 'application/json');
    return { name, handle: null };
  },
  async exportReport({ html, suggestedName, format }) {
    if (format === 'pdf')
      throw new Error(
        'the browser build does not write PDF files itself: use "Print / save as PDF" on the Review screen and choose "Save as PDF" in the print dialog',
      );
    const name = withExt(suggestedName, '.html');
    download(name, html, 'text/html');
    return { name, handle: null };
  },
  async recentFiles() {
    return [];
  },
  async openRecent() {
    throw new Error('the browser build has no recent-files list; open the file again');
  },
  reveal: null,
  setDocumentState() {
    /* the browser asks through beforeunload (see useUnsavedGuard) */
  },
  onMenuCommand() {
    return () => {};
  },
  drafts: localDrafts(typeof localStorage === 'undefined' ? null : localStorage),
};
