/** Types of launch.mjs. */
/** Path of the installed Electron executable in `electronDir`, or null when the binary has not been fetched. */
export declare function findElectronBinary(electronDir: string): string | null;
