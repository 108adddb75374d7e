import { createHash, randomBytes } from 'node:crypto';

const ALPHABET = 'abcdefghijkmnpqrstuvwxyz23456789'; // 32 symbols, no look-alikes (l, o, 0, 1)

function bytesToBase32(bytes: Uint8Array): string {
  let out = '';
  let buffer = 0;
  let bits = 0;
  for (const byte of bytes) {
    buffer = (buffer << 8) | byte;
    bits += 8;
    while (bits >= 5) {
      out += ALPHABET[(buffer >>> (bits - 5)) & 31];
      bits -= 5;
    }
  }
  if (bits > 0) out += ALPHABET[(buffer << (5 - bits)) & 31];
  return out;
}

/** Returns a new random row id (20 characters, 100 bits). */
export function newId(): string {
  return bytesToBase32(randomBytes(13)).slice(0, 20);
}

/** Returns a new secret token for e-mail links and keys (256 bits, URL-safe). */
export function newToken(): string {
  return bytesToBase32(randomBytes(32));
}

/** Returns the lower-case hex SHA-256 of a string or bytes (tokens are stored only as this). */
export function sha256Hex(value: string | Uint8Array): string {
  return createHash('sha256').update(value).digest('hex');
}
