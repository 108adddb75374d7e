/**
 * Demo controllers of the invented "Halvorsen Machine Works", as interchange
 * documents (DESIGN.md §4). Invented scenarios; the behaviour follows common
 * practice for such devices (no source), simplified for a clockless table.
 */
import type { Interchange } from '../../engine/model';

/** A demo controller: slug, display name, and its first revision. */
export type DemoController = { slug: string; name: string; message: string; doc: Interchange };

/**
 * Guard-door interlock of a press brake: the drive may run only after the door
 * is closed and then the start key is turned; opening the door always drops the
 * enable, and a key already held when the door closes is ignored until released.
 */
const doorInterlock: Interchange = {
  format: 'quiesce-flow-table',
  version: 1,
  name: 'door_interlock',
  description:
    'Guard door interlock for press brake PB-40. run_enable only after door closed, then key turned; a key held while the door closes is ignored until released.',
  inputs: ['door_closed', 'start_key'],
  outputs: ['run_enable'],
  states: ['open_idle', 'closed_ready', 'running', 'run_held', 'blocked'],
  reset: 'open_idle',
  rows: {
    open_idle: { '00': 'open_idle/0', '01': 'open_idle/0', '11': 'blocked/0', '10': 'closed_ready/0' },
    closed_ready: { '00': 'open_idle/0', '11': 'running/1', '10': 'closed_ready/0' },
    running: { '01': 'open_idle/0', '11': 'running/1', '10': 'run_held/1' },
    run_held: { '00': 'open_idle/0', '11': 'running/1', '10': 'run_held/1' },
    blocked: { '01': 'open_idle/0', '11': 'blocked/0', '10': 'closed_ready/0' },
  },
  settings: { doubleChange: 'fault', prefix: 'door_ilk' },
  scenarios: [
    { name: 'normal start and stop', inputs: ['00', '10', '11', '10', '00'] },
    { name: 'key held while closing', inputs: ['01', '11', '10', '11'] },
  ],
};

const CW_NEXT: Record<string, string> = { '00': '10', '10': '11', '11': '01', '01': '00' };
const CCW_NEXT: Record<string, string> = { '00': '01', '01': '11', '11': '10', '10': '00' };
const OPPOSITE: Record<string, string> = { '00': '11', '11': '00', '10': '01', '01': '10' };

function jogRows(): Record<string, Record<string, string>> {
  const rows: Record<string, Record<string, string>> = {};
  const bits = (dir: 'cw' | 'ccw', phase: string) => `${dir === 'cw' ? 1 : 0}${phase === '00' ? 1 : 0}`;
  for (const dir of ['cw', 'ccw'] as const) {
    for (const phase of ['00', '10', '11', '01']) {
      const row: Record<string, string> = {};
      row[phase] = `${dir}_${phase}/${bits(dir, phase)}`;
      const cw = CW_NEXT[phase]!;
      const ccw = CCW_NEXT[phase]!;
      row[cw] = `cw_${cw}/${bits('cw', cw)}`;
      row[ccw] = `ccw_${ccw}/${bits('ccw', ccw)}`;
      rows[`${dir}_${phase}`] = row;
    }
  }
  // Power-up may find the encoder in any phase: the reset row settles in every column.
  rows['cw_00']![OPPOSITE['00']!] = `cw_11/${bits('cw', '11')}`;
  return rows;
}

/**
 * Jog-wheel decoder of a hand-held pendant: quadrature channels a and b; `dir`
 * tells the last direction (1 = clockwise), `detent` is 1 at the resting phase.
 */
const jogWheel: Interchange = {
  format: 'quiesce-flow-table',
  version: 1,
  name: 'jog_wheel',
  description: 'Quadrature decoder for the HP-7 pendant jog wheel: one state per phase and direction.',
  inputs: ['a', 'b'],
  outputs: ['dir', 'detent'],
  states: ['cw_00', 'cw_10', 'cw_11', 'cw_01', 'ccw_00', 'ccw_10', 'ccw_11', 'ccw_01'],
  reset: 'cw_00',
  rows: jogRows(),
  settings: { doubleChange: 'fault', prefix: 'jog' },
  scenarios: [
    { name: 'one detent clockwise', inputs: ['00', '10', '11', '01', '00'] },
    { name: 'one detent counter-clockwise', inputs: ['00', '01', '11', '10', '00'] },
  ],
};

/**
 * Two-hand control of a small riveting press: `press` only while both palm
 * buttons are held, and only when both were released since the last stroke;
 * buttons held at power-up lock out. The 0.5 s synchrony window is checked by a
 * separate timer, not by this clockless table.
 */
const twoHandPress: Interchange = {
  format: 'quiesce-flow-table',
  version: 1,
  name: 'two_hand_press',
  description:
    'Two-hand control for riveting press RP-2: stroke only with both buttons, both released before the next stroke; held buttons at power-up lock out.',
  inputs: ['left', 'right'],
  outputs: ['press'],
  states: ['power_on', 'idle', 'left_only', 'right_only', 'run', 'lock_l', 'lock_r', 'lock_both'],
  reset: 'power_on',
  rows: {
    power_on: { '00': 'idle/0', '01': 'lock_r/0', '11': 'lock_both/0', '10': 'lock_l/0' },
    idle: { '00': 'idle/0', '01': 'right_only/0', '10': 'left_only/0' },
    left_only: { '00': 'idle/0', '11': 'run/1', '10': 'left_only/0' },
    right_only: { '00': 'idle/0', '01': 'right_only/0', '11': 'run/1' },
    run: { '01': 'lock_r/0', '11': 'run/1', '10': 'lock_l/0' },
    lock_l: { '00': 'idle/0', '11': 'lock_both/0', '10': 'lock_l/0' },
    lock_r: { '00': 'idle/0', '01': 'lock_r/0', '11': 'lock_both/0' },
    lock_both: { '01': 'lock_r/0', '11': 'lock_both/0', '10': 'lock_l/0' },
  },
  settings: { doubleChange: 'fault', prefix: 'press2h' },
  scenarios: [
    { name: 'normal stroke', inputs: ['00', '10', '11', '10', '00'] },
    { name: 'button tied down', inputs: ['10', '11', '10', '11'] },
  ],
};

/** The demo controllers in display order. */
export const DEMO_CONTROLLERS: readonly DemoController[] = [
  { slug: 'door-interlock', name: 'Guard door interlock (PB-40)', message: 'First version from the safety concept', doc: doorInterlock },
  { slug: 'jog-wheel', name: 'Pendant jog wheel (HP-7)', message: 'Quadrature decoder, one state per phase', doc: jogWheel },
  { slug: 'two-hand-press', name: 'Two-hand control (RP-2)', message: 'Two-hand control with power-up lockout', doc: twoHandPress },
];
