import { describe, it, expect } from 'vitest';
import { sha256Hex, utf8Bytes } from '../../../src/engine/study/sha256.ts';

describe('sha256Hex', () => {
  // NIST FIPS 180-2 (2002), Appendix B.1: one-block message "abc".
  it('matches the FIPS 180-2 one-block example', () => {
    expect(sha256Hex('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });
  // NIST FIPS 180-2 (2002), Appendix B.2: two-block message.
  it('matches the FIPS 180-2 multi-block example', () => {
    expect(sha256Hex('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq')).toBe(
      '248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1',
    );
  });
  // NIST FIPS 180-2 (2002), Appendix B.3: one million repetitions of "a".
  it('matches the FIPS 180-2 long-message example', () => {
    expect(sha256Hex(new Uint8Array(1_000_000).fill(0x61))).toBe(
      'cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0',
    );
  });
  // NIST CAVP SHA-256 short-message vectors (SHA256ShortMsg.rsp, Len = 0): the empty message.
  it('hashes the empty message to the NIST value', () => {
    expect(sha256Hex('')).toBe('e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855');
  });
  // Padding boundaries (55, 56, 64 bytes): compared with Node's own crypto as a general-purpose reference library.
  it('agrees with a reference implementation at the padding boundaries', async () => {
    const { createHash } = await import('node:crypto');
    for (const n of [55, 56, 57, 63, 64, 65, 119, 120, 128]) {
      const s = 'x'.repeat(n) + 'é€😀';
      expect(sha256Hex(s), `length ${n}`).toBe(createHash('sha256').update(s, 'utf8').digest('hex'));
    }
  });
  // RFC 3629 (2003), UTF-8: encoding of 2-, 3- and 4-byte characters.
  it('encodes UTF-8 as RFC 3629 does', () => {
    expect(Array.from(utf8Bytes('é€😀'))).toEqual([0xc3, 0xa9, 0xe2, 0x82, 0xac, 0xf0, 0x9f, 0x98, 0x80]);
  });
});
