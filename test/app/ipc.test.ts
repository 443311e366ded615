import { describe, it, expect } from 'vitest';
import path from 'node:path';
import { CHANNELS, MENU_CHANNEL, validateRequest, validateSender } from '../../app/lib/ipc.cjs';
import { isAppUrl } from '../../app/lib/security.cjs';
import { BRIDGE_CHANNELS, MENU_CHANNEL as SHARED_MENU } from '../../src/ui/platform/desktopBridge.ts';

const granted = new Set(['/home/u/studies/q3.study.json']);
const ctx = { granted, isAbsolute: path.isAbsolute };

function refused(channel: string, arg: unknown): { code: string; field: string; message: string } {
  const r = validateRequest(channel, arg, ctx);
  if (r.ok) throw new Error(`expected ${channel} ${JSON.stringify(arg)?.slice(0, 80)} to be refused`);
  return r.error;
}

describe('IPC channel table', () => {
  it('matches the shared bridge table the renderer uses', () => {
    expect(CHANNELS).toEqual(BRIDGE_CHANNELS);
    expect(MENU_CHANNEL).toBe(SHARED_MENU);
  });
});

describe('IPC request validation', () => {
  it('accepts well-formed requests and passes on only the known fields', () => {
    const r = validateRequest(CHANNELS.openFile, { kind: 'study' }, ctx);
    expect(r).toEqual({ ok: true, value: { kind: 'study' } });
    const s = validateRequest(CHANNELS.save, { path: '/home/u/studies/q3.study.json', text: '{}' }, ctx);
    expect(s.ok).toBe(true);
  });
  it('refuses a non-object, an array, or a request with extra fields, naming the field', () => {
    expect(refused(CHANNELS.openFile, 'study').field).toBe('request');
    expect(refused(CHANNELS.openFile, ['study']).field).toBe('request');
    const e = refused(CHANNELS.openFile, { kind: 'study', path: '/etc/passwd' });
    expect(e.field).toBe('path');
    expect(e.message).toMatch(/unexpected field/);
  });
  it('refuses an unknown file kind and lists the allowed ones', () => {
    const e = refused(CHANNELS.openFile, { kind: 'exe' });
    expect(e.code).toBe('E_IPC_KIND');
    expect(e.message).toMatch(/study, deal, market, csv/);
  });
  it('refuses to save to a path the user did not choose in this session', () => {
    const e = refused(CHANNELS.save, { path: '/home/u/.bashrc', text: 'x' });
    expect(e.code).toBe('E_IPC_NOT_GRANTED');
    expect(e.message).toMatch(/Save as/);
  });
  it('refuses relative paths, NUL bytes and non-string paths', () => {
    expect(refused(CHANNELS.save, { path: 'q3.study.json', text: 'x' }).code).toBe('E_IPC_PATH');
    expect(refused(CHANNELS.reveal, { path: '/home/u/a\0b' }).code).toBe('E_IPC_PATH');
    expect(refused(CHANNELS.reveal, { path: 42 }).code).toBe('E_IPC_PATH');
  });
  it('refuses non-string file contents', () => {
    expect(refused(CHANNELS.save, { path: '/home/u/studies/q3.study.json', text: { a: 1 } }).code).toBe(
      'E_IPC_TEXT',
    );
  });
  it('refuses suggested names that contain folders or special characters', () => {
    for (const name of ['../x', 'a/b', 'a\\b', 'C:x', '', '..', 'a\nb', 'x'.repeat(201)]) {
      const e = refused(CHANNELS.saveAs, { kind: 'study', suggestedName: name, text: '{}' });
      expect(e.field, name).toBe('suggestedName');
    }
    expect(
      validateRequest(CHANNELS.saveAs, { kind: 'study', suggestedName: 'Q3 note', text: '{}' }, ctx).ok,
    ).toBe(true);
  });
  it('only exports complete HTML documents as reports', () => {
    expect(refused(CHANNELS.exportReportPdf, { html: '<script>x</script>', suggestedName: 'r' }).code).toBe(
      'E_IPC_HTML',
    );
    expect(
      validateRequest(
        CHANNELS.exportReportHtml,
        { html: '<!doctype html><html></html>', suggestedName: 'r' },
        ctx,
      ).ok,
    ).toBe(true);
  });
  it('checks the document state flags', () => {
    expect(refused(CHANNELS.setDocumentState, { dirty: 'yes', title: 't' }).field).toBe('dirty');
    expect(validateRequest(CHANNELS.setDocumentState, { dirty: true, title: 'Q3' }, ctx).ok).toBe(true);
  });
  it('refuses an unknown channel', () => {
    expect(refused('ft:run-shell', {}).code).toBe('E_IPC_CHANNEL');
  });
});

describe('IPC sender check', () => {
  it('accepts only the application page as sender', () => {
    expect(validateSender('app://factor-triage/index.html', isAppUrl).ok).toBe(true);
    expect(validateSender('https://example.invalid/', isAppUrl).ok).toBe(false);
    expect(validateSender(undefined, isAppUrl).ok).toBe(false);
  });
});
