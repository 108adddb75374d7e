/** Identifier rules: readable, valid, distinct C and Rust identifiers from any names, deterministically. */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  buildIdentifiers,
  C_KEYWORDS,
  MAX_IDENTIFIER,
  nameToPrefix,
  nameToWords,
  resolveCollisions,
  resolvePrefix,
  RUST_KEYWORDS,
  wordsToCamel,
} from '../../../src/lib/codegen/identifiers';
import { nameSchema } from '../../../src/lib/engine/model';
import { HOSTILE_NAMES } from '../../support/arbitrary-table';
import { HOSTILE_STATES } from './support';

const C_IDENT = /^[A-Za-z_][A-Za-z0-9_]*$/;
const RUST_CAMEL = /^[A-Z][A-Za-z0-9]*$/;
const RUST_CONST = /^[A-Z][A-Z0-9_]*$/;

describe('identifiers', () => {
  it('splits names into ASCII words, transliterating Latin letters and escaping the rest', () => {
    expect(nameToWords('door_closed')).toEqual(['door', 'closed']);
    expect(nameToWords('doorClosed')).toEqual(['door', 'Closed']);
    expect(nameToWords('HTTPServer')).toEqual(['HTTP', 'Server']);
    expect(nameToWords('a-b')).toEqual(['a', 'b']);
    expect(nameToWords('2fast')).toEqual(['2fast']);
    expect(nameToWords('Ünlock')).toEqual(['Unlock']);
    expect(nameToWords('Straße')).toEqual(['Strasse']);
    expect(nameToWords('Δt')).toEqual(['u394', 't']);
    expect(nameToWords('+')).toEqual(['u2b']);
    expect(wordsToCamel(['door', 'closed'])).toBe('DoorClosed');
  });

  it('handles the hostile names of the issue: keywords, leading digit, collisions, non-ASCII, 64 characters', () => {
    const ids = buildIdentifiers({ states: HOSTILE_STATES, inputs: ['in'], outputs: ['out'] }, 'demo');
    const c = ids.states.map((e) => e.c);
    const rust = ids.states.map((e) => e.rust);
    expect(c.slice(0, 9)).toEqual([
      'DEMO_STATE_INT',
      'DEMO_STATE_MATCH',
      'DEMO_STATE_SELF',
      'DEMO_STATE_2FAST',
      'DEMO_STATE_A_B',
      'DEMO_STATE_A_B_2',
      'DEMO_STATE_A_B_3',
      'DEMO_STATE_UNLOCK',
      'DEMO_STATE_UNLOCK_2',
    ]);
    expect(rust.slice(0, 9)).toEqual(['Int', 'Match', 'SelfState', 'S2fast', 'AB', 'AB2', 'AB3', 'Unlock', 'Unlock2']);
    expect(new Set(c).size).toBe(c.length);
    expect(new Set(rust).size).toBe(rust.length);
    for (const id of c) expect(id.length).toBeLessThanOrEqual(MAX_IDENTIFIER);
  });

  it('collisions keep unique bases and number the later duplicates, skipping taken names', () => {
    expect(resolveCollisions(['A', 'B', 'A', 'A_2', 'A'], '_')).toEqual(['A', 'B', 'A_3', 'A_2', 'A_4']);
  });

  it('prefixes: sanitized from the table name, never a keyword of either target, a header name or a built-in crate', () => {
    expect(nameToPrefix('Door Interlock (rev B)')).toBe('door_interlock_rev_b');
    expect(nameToPrefix('2-hand press')).toBe('ctl_2_hand_press');
    expect(nameToPrefix('…')).toBe('u2026');
    for (const p of ['int', 'match', 'self', 'crate', 'super', 'stdio', 'core', 'test', 'replay']) expect(resolvePrefix(p)).toBe(`${p}_ctl`);
    expect(resolvePrefix('door')).toBe('door');
  });

  it('any valid names give valid, distinct identifiers in both targets (random names, the shared hostile list)', () => {
    const name = fc.oneof(fc.constantFrom(...HOSTILE_NAMES, ...HOSTILE_STATES), fc.string({ minLength: 1, maxLength: 64, unit: 'grapheme' })).filter((s) => nameSchema.safeParse(s).success);
    fc.assert(
      fc.property(fc.uniqueArray(name, { minLength: 1, maxLength: 12 }), fc.uniqueArray(name, { minLength: 1, maxLength: 6 }), (states, inputs) => {
        const ids = buildIdentifiers({ states, inputs, outputs: inputs }, 'p');
        for (const group of [ids.states, ids.inputs, ids.outputs]) {
          expect(new Set(group.map((e) => e.c)).size).toBe(group.length);
          expect(new Set(group.map((e) => e.rust)).size).toBe(group.length);
          for (const e of group) {
            expect(e.c).toMatch(C_IDENT);
            expect(e.c.length).toBeLessThanOrEqual(MAX_IDENTIFIER);
            expect(C_KEYWORDS.has(e.c)).toBe(false);
            expect(RUST_KEYWORDS.has(e.rust)).toBe(false);
          }
        }
        for (const e of ids.states) expect(e.rust).toMatch(RUST_CAMEL);
        for (const e of ids.inputs) expect(e.rust).toMatch(RUST_CONST);
      }),
      { numRuns: 300, seed: 7 },
    );
  });

  it('is deterministic: the same names give the same map', () => {
    const names = ['a b', 'a-b', 'a_b', 'Ünlock', 'Unlock'];
    expect(buildIdentifiers({ states: names, inputs: names, outputs: [] }, 'x')).toEqual(buildIdentifiers({ states: names, inputs: names, outputs: [] }, 'x'));
  });
});
