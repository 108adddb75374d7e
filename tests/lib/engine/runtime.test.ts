import { describe, expect, it } from 'vitest';
import { interchangeToTable, keyToColumn, type DoubleChangePolicy } from '../../../src/lib/engine/model';
import { createRuntime, powerUp, stepMachine } from '../../../src/lib/engine/runtime';

// Invented example: a two-input latch-like table whose double changes are easy to reason about by hand.
const table = interchangeToTable({
  format: 'quiesce-flow-table',
  version: 1,
  name: 'pair',
  inputs: ['a', 'b'],
  outputs: ['y', 'z'],
  states: ['low', 'mid', 'high'],
  reset: 'low',
  rows: {
    low: { '00': 'low/00', '10': 'mid/--', '01': 'low/0-', '11': '-' },
    mid: { '10': 'mid/1-', '11': 'high/--', '00': 'low/--', '01': 'low/--' },
    high: { '11': 'high/11', '01': 'high/-1', '10': 'mid/--', '00': 'low/--' },
  },
});
const rt = createRuntime(table);
const col = keyToColumn;

function run(policy: DoubleChangePolicy, keys: string[]) {
  let m = powerUp(rt, col(keys[0]!));
  const out = [m];
  for (const k of keys.slice(1)) {
    m = stepMachine(rt, m.next, col(k), policy);
    out.push(m);
  }
  return out.map((o) => `${table.states[o.next.state]}:${o.next.outputs}:${o.fault}`);
}

describe('run-time contract', () => {
  it('settles single changes and holds don\'t-care outputs at their previous value', () => {
    // mid at 10 specifies y=1 and z is a don't-care, so z keeps 0; high at 01 leaves y a don't-care, so y stays 1
    expect(run('fault', ['00', '10', '11', '01'])).toEqual(['low:0:none', 'mid:1:none', 'high:3:none', 'high:3:none']);
  });

  it('faults and holds on an unspecified cell', () => {
    expect(run('fault', ['01', '11'])).toEqual(['low:0:none', 'low:0:unspecified']);
  });

  it('power-up into an unspecified cell faults with outputs off', () => {
    expect(run('fault', ['11'])).toEqual(['low:0:power-up']);
  });

  it('applies the double-change policy', () => {
    // from (low, 00) to 11: a first -> mid -> high; b first -> low at 01 -> unspecified; direct -> unspecified
    expect(run('fault', ['00', '11'])).toEqual(['low:0:none', 'low:0:double-change']);
    expect(run('guarded', ['00', '11'])).toEqual(['low:0:none', 'low:0:double-change']);
    expect(run('stepwise', ['00', '11'])).toEqual(['low:0:none', 'high:3:none']);
    expect(run('direct', ['00', '11'])).toEqual(['low:0:none', 'low:0:double-change']);
    // from (high, 11) to 00: every order and the direct cell agree on low, so guarded applies it
    expect(run('guarded', ['00', '10', '11', '00'])).toEqual(['low:0:none', 'mid:1:none', 'high:3:none', 'low:0:none']);
  });
});
