import { describe, expect, it } from 'vitest';
import { parseCellInput } from '../../../src/components/workbench/FlowGrid';
import { parseText } from '../../../src/lib/engine/formats/text';
import { NONE } from '../../../src/lib/engine/model';

// Invented example: a two-output table whose state names share prefixes.
const t = parseText(`flow feeder
inputs jam
outputs motor lamp
reset idle

grid   0        1
  idle   idle/00  jammed/01
  jammed idle/00  jammed/01
  jog    -        -
`);

describe('parseCellInput (what a user types into a grid cell)', () => {
  it('reads a next state with output bits, and completes a unique prefix', () => {
    expect(parseCellInput('jammed/1-', t, { next: NONE })).toEqual({ next: 1, bits: '1-' });
    expect(parseCellInput('jam/01', t, { next: NONE })).toEqual({ next: 1, bits: '01' });
    expect(parseCellInput('  idle ', t, { next: NONE })).toEqual({ next: 0, bits: null });
  });
  it('keeps the next state when only bits are typed, and clears on "-"', () => {
    expect(parseCellInput('/10', t, { next: 2 })).toEqual({ next: 2, bits: '10' });
    expect(parseCellInput('-', t, { next: 2 })).toEqual({ next: NONE, bits: null });
  });
  it('explains ambiguous prefixes, unknown names and bad bits', () => {
    expect(parseCellInput('j', t, { next: NONE })).toEqual({ error: '"j" matches jammed, jog: type more' });
    expect(parseCellInput('stop', t, { next: NONE })).toEqual({ error: 'no state named "stop"' });
    expect(parseCellInput('idle/2', t, { next: NONE })).toEqual({ error: 'outputs are 2 characters of 0, 1 or -' });
    expect(parseCellInput('/01', t, { next: NONE })).toEqual({ error: 'name the next state first' });
  });
});
