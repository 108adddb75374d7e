/** Tables several test files share. */
import { interchangeToTable, type FlowTable, type Interchange } from '../../src/lib/engine/model';

/**
 * The gated (D) latch worked example of check-data/README.md: the primitive flow table of the
 * gated-latch design example in Mano and Ciletti, "Digital Design" (textbook), encoded from memory
 * and from secondary write-ups. Inputs D G, output Q, outputs only in stable cells.
 */
export function gatedLatchTable(): FlowTable {
  return interchangeToTable({
    format: 'quiesce-flow-table',
    version: 1,
    name: 'gated_latch',
    inputs: ['D', 'G'],
    outputs: ['Q'],
    states: ['a', 'b', 'c', 'd', 'e', 'f'],
    reset: 'a',
    rows: {
      a: { '00': 'c/-', '01': 'a/0', '11': 'b/-' },
      b: { '01': 'a/-', '11': 'b/1', '10': 'e/-' },
      c: { '00': 'c/0', '01': 'a/-', '10': 'd/-' },
      d: { '00': 'c/-', '11': 'b/-', '10': 'd/0' },
      e: { '00': 'f/-', '11': 'b/-', '10': 'e/1' },
      f: { '00': 'f/1', '01': 'a/-', '10': 'e/-' },
    },
  });
}

/** The invented door interlock of DESIGN.md §4, as an interchange document (a fresh copy each call). */
export function doorInterlockDocument(): Interchange {
  return {
    format: 'quiesce-flow-table',
    version: 1,
    name: 'door_interlock',
    inputs: ['door_closed', 'key'],
    outputs: ['unlock'],
    states: ['idle', 'armed', 'open'],
    reset: 'idle',
    rows: {
      idle: { '00': 'idle/0', '01': 'armed/0', '11': '-', '10': 'idle/0' },
      armed: { '00': 'idle/0', '01': 'armed/0', '11': 'open/-', '10': '-' },
      open: { '00': '-', '01': 'armed/0', '11': 'open/1', '10': 'idle/0' },
    },
  };
}

/** The door interlock of `doorInterlockDocument` as a FlowTable (a fresh table each call). */
export function doorInterlockTable(): FlowTable {
  return interchangeToTable(doorInterlockDocument());
}
