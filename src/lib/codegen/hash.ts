/** Hashes for manifests and headers: pure-JS sha256 (runs in the browser too) over canonical JSON. */
import { sha256 } from '@noble/hashes/sha2.js';
import { bytesToHex } from '@noble/hashes/utils.js';
import canonicalize from 'canonicalize';
import { tableToInterchange, type FlowTable } from '../engine/model';

const encoder = new TextEncoder();

/** sha256 of bytes or of a string's UTF-8 encoding, as lower-case hex. */
export function sha256Hex(data: Uint8Array | string): string {
  return bytesToHex(sha256(typeof data === 'string' ? encoder.encode(data) : data));
}

/** The canonical JSON (RFC 8785) of a table's interchange document: what the source hash covers. */
export function tableToCanonicalJson(t: FlowTable): string {
  return canonicalize(tableToInterchange(t))!;
}

/** The source hash of a table: sha256 of its canonical interchange JSON. */
export function hashTable(t: FlowTable): string {
  return sha256Hex(tableToCanonicalJson(t));
}
