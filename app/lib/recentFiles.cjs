// @ts-check
'use strict';
/**
 * The recent-files list: pure list operations plus a tolerant reader (a damaged list file is
 * ignored, never fatal) and an atomic writer.
 */
const { writeFileAtomic } = require('./atomicWrite.cjs');

const MAX_RECENT = 12;
const KINDS = ['study', 'deal', 'market', 'csv'];

/**
 * @typedef {{ path: string, name: string, kind: 'study'|'deal'|'market'|'csv', at: number }} RecentFile
 */

/**
 * Puts `entry` first, removes an older entry with the same path, keeps at most `max` entries.
 * @param {RecentFile[]} list
 * @param {RecentFile} entry
 * @returns {RecentFile[]}
 */
function addRecent(list, entry, max = MAX_RECENT) {
  return [entry, ...list.filter((r) => r.path !== entry.path)].slice(0, max);
}

/**
 * @param {RecentFile[]} list
 * @param {string} path
 * @returns {RecentFile[]}
 */
function removeRecent(list, path) {
  return list.filter((r) => r.path !== path);
}

/**
 * Parses a stored list, dropping malformed entries; a file that is not a list gives [].
 * @param {string} text
 * @returns {RecentFile[]}
 */
function parseRecent(text) {
  let data;
  try {
    data = JSON.parse(text);
  } catch {
    return [];
  }
  const list = data && Array.isArray(data.files) ? data.files : [];
  /** @type {RecentFile[]} */
  const out = [];
  for (const r of list) {
    if (
      r &&
      typeof r.path === 'string' &&
      r.path.length > 0 &&
      typeof r.name === 'string' &&
      KINDS.includes(r.kind) &&
      typeof r.at === 'number' &&
      Number.isFinite(r.at)
    )
      out.push({ path: r.path, name: r.name, kind: r.kind, at: r.at });
  }
  return out.slice(0, MAX_RECENT);
}

/** @param {RecentFile[]} list */
function serializeRecent(list) {
  return JSON.stringify({ format: 'factor-triage/recent@1', files: list }, null, 2) + '\n';
}

/**
 * @param {string} file
 * @param {typeof import('node:fs')} fs
 */
function loadRecent(file, fs) {
  try {
    return parseRecent(fs.readFileSync(file, 'utf8'));
  } catch {
    return [];
  }
}

/**
 * @param {string} file
 * @param {RecentFile[]} list
 * @param {typeof import('node:fs')} [fs]
 */
function storeRecent(file, list, fs) {
  writeFileAtomic(file, serializeRecent(list), fs ? { fs } : {});
}

module.exports = {
  MAX_RECENT,
  addRecent,
  removeRecent,
  parseRecent,
  serializeRecent,
  loadRecent,
  storeRecent,
};
