// @ts-check
'use strict';
/**
 * Atomic file writes: the text goes to a temporary file in the same folder, is flushed to disk,
 * and only then renamed over the target. A write that fails or is interrupted midway leaves the
 * previous file untouched (rename within one folder replaces the name in one step).
 */
const nodeFs = require('node:fs');
const nodePath = require('node:path');

let counter = 0;

/**
 * Writes `text` (UTF-8) or bytes to `target` atomically.
 * @param {string} target absolute path of the file to write
 * @param {string | Uint8Array} text
 * @param {{ fs?: typeof import('node:fs'), pid?: number }} [deps] the file system (replaceable in tests)
 */
function writeFileAtomic(target, text, deps = {}) {
  const fs = deps.fs ?? nodeFs;
  const dir = nodePath.dirname(target);
  const base = nodePath.basename(target);
  counter += 1;
  const tmp = nodePath.join(dir, `.${base}.${deps.pid ?? process.pid}.${Date.now()}.${counter}.tmp`);
  const data = typeof text === 'string' ? Buffer.from(text, 'utf8') : Buffer.from(text);
  let fd = -1;
  try {
    fd = fs.openSync(tmp, 'wx', 0o644);
    let written = 0;
    while (written < data.length) written += fs.writeSync(fd, data, written, data.length - written);
    fs.fsyncSync(fd);
    fs.closeSync(fd);
    fd = -1;
    fs.renameSync(tmp, target);
  } catch (e) {
    if (fd !== -1) {
      try {
        fs.closeSync(fd);
      } catch {
        /* already closed */
      }
    }
    try {
      fs.unlinkSync(tmp);
    } catch {
      /* the temp file may not exist */
    }
    throw e;
  }
}

module.exports = { writeFileAtomic };
