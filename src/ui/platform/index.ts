export * from './platform.ts';
export * from './desktopBridge.ts';
