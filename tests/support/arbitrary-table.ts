/**
 * fast-check generator of random flow tables, shared by the engine's property tests.
 *
 *   fc.assert(fc.property(arbitraryTable(), (t) => ...))
 *   arbitraryTable({ maxInputs: 2, hostileNames: false, unspecified: 0 })
 *
 * Tables are always valid for the model (names follow nameSchema, names unique per kind, no state
 * named "-"). Per table it draws the rate of unspecified cells, of don't-care output bits and of
 * stable cells, so both sparse and dense tables and both races and quiet tables appear.
 */
import fc from 'fast-check';
import { createTable, DOUBLE_CHANGE_POLICIES, nameSchema, type FlowTable } from '../../src/lib/engine/model';

/** Options of `arbitraryTable`; every field is optional. */
export interface ArbitraryTableOptions {
  minInputs?: number;
  /** Default 4. */
  maxInputs?: number;
  minOutputs?: number;
  /** Default 3. */
  maxOutputs?: number;
  /** Default 1. */
  minStates?: number;
  /** Default 8. */
  maxStates?: number;
  /** Probability (0..1) that a cell is unspecified; drawn per table from {0, .15, .4, .8} when absent. */
  unspecified?: number;
  /** Probability that a specified output bit is a don't-care; drawn per table from {0, .3, .7} when absent. */
  dontCare?: number;
  /** Probability that a specified cell is stable (next = its own row); drawn from {.2, .5, .8} when absent. */
  stable?: number;
  /** Sometimes use names that need quoting or escaping (spaces, quotes, keywords, unicode, commas). Default true. */
  hostileNames?: boolean;
  /** Add a description, a prefix, a random policy and scenarios. Default true. */
  extras?: boolean;
}

/** Names that need care in one format or another; every one is valid for the model. */
export const HOSTILE_NAMES = [
  'grid',
  'cells',
  'flow',
  'reset',
  'states',
  'double-change',
  'a b',
  'inner space',
  '"quoted"',
  "it's",
  'back\\slash',
  '#hash',
  'x#y',
  'comma,name',
  'semi;colon',
  '=SUM(A1)',
  'ünïcödé',
  'Δt',
  '門',
  'door 🚪',
  '00',
  '1',
  '-x',
  'x-',
  '*',
  '.dot',
  'end.',
  '{brace}',
  '[0]',
  'a\u00a0nbsp',
  'x'.repeat(64),
] as const;

// built once: arbitraries made inside `chain` are rebuilt for every sample, and regex-based ones are slow to build
const PLAIN_NAME = fc.stringMatching(/^[a-z][a-z0-9_]{0,7}$/);
const PREFIX = fc.option(fc.stringMatching(/^[a-z][a-z0-9_]{0,9}$/), { nil: undefined });

const NAME_ARBITRARIES = new Map<string, fc.Arbitrary<string>>();

function nameArbitrary(hostile: boolean, forState: boolean): fc.Arbitrary<string> {
  const key = `${hostile}${forState}`;
  let a = NAME_ARBITRARIES.get(key);
  if (!a) NAME_ARBITRARIES.set(key, (a = buildNameArbitrary(hostile, forState)));
  return a;
}

function buildNameArbitrary(hostile: boolean, forState: boolean): fc.Arbitrary<string> {
  if (!hostile) return PLAIN_NAME;
  const wild = fc
    .string({ minLength: 1, maxLength: 12, unit: 'grapheme' })
    .filter((s) => nameSchema.safeParse(s).success);
  const pool = fc.constantFrom(...HOSTILE_NAMES);
  const any = fc.oneof({ weight: 6, arbitrary: PLAIN_NAME }, { weight: 2, arbitrary: pool }, { weight: 1, arbitrary: wild });
  // "-" marks an unspecified cell, and "__proto__" cannot be an object key in the interchange JSON
  return forState ? any.filter((s) => s !== '-' && s !== '__proto__') : any.filter((s) => s !== '__proto__');
}

const rate = (fixed: number | undefined, choices: number[]) => (fixed !== undefined ? fc.constant(fixed) : fc.constantFrom(...choices));

/** A random valid FlowTable. */
export function arbitraryTable(opts: ArbitraryTableOptions = {}): fc.Arbitrary<FlowTable> {
  const hostile = opts.hostileNames ?? true;
  const extras = opts.extras ?? true;
  const shape = fc.record({
    n: fc.integer({ min: opts.minInputs ?? 1, max: opts.maxInputs ?? 4 }),
    m: fc.integer({ min: opts.minOutputs ?? 0, max: opts.maxOutputs ?? 3 }),
    s: fc.integer({ min: opts.minStates ?? 1, max: opts.maxStates ?? 8 }),
    unspecified: rate(opts.unspecified, [0, 0.15, 0.4, 0.8]),
    dontCare: rate(opts.dontCare, [0, 0.3, 0.7]),
    stable: rate(opts.stable, [0.2, 0.5, 0.8]),
  });
  return shape.chain(({ n, m, s, unspecified, dontCare, stable }) => {
    const cols = 1 << n;
    const cell = fc.record({
      u: fc.integer({ min: 0, max: 999 }),
      st: fc.integer({ min: 0, max: 999 }),
      next: fc.integer({ min: 0, max: s - 1 }),
      bits: fc.array(fc.tuple(fc.integer({ min: 0, max: 999 }), fc.boolean()), { minLength: m, maxLength: m }),
    });
    const key = fc.array(fc.constantFrom('0', '1'), { minLength: n, maxLength: n }).map((a) => a.join(''));
    return fc
      .record({
        name: nameArbitrary(hostile, false),
        inputs: fc.uniqueArray(nameArbitrary(hostile, false), { minLength: n, maxLength: n }),
        outputs: fc.uniqueArray(nameArbitrary(hostile, false), { minLength: m, maxLength: m }),
        states: fc.uniqueArray(nameArbitrary(hostile, true), { minLength: s, maxLength: s }),
        reset: fc.integer({ min: 0, max: s - 1 }),
        cells: fc.array(cell, { minLength: s * cols, maxLength: s * cols }),
        description: extras ? fc.option(fc.string({ maxLength: 40 }), { nil: undefined }) : fc.constant(undefined),
        policy: extras ? fc.constantFrom(...DOUBLE_CHANGE_POLICIES) : fc.constant('guarded' as const),
        prefix: extras ? PREFIX : fc.constant(undefined),
        scenarios: extras
          ? fc.uniqueArray(fc.record({ name: fc.string({ minLength: 1, maxLength: 20 }), inputs: fc.array(key, { minLength: 1, maxLength: 5 }) }), {
              maxLength: 2,
              selector: (x) => x.name,
            })
          : fc.constant([]),
      })
      .map((r) => {
        const t = createTable({
          name: r.name,
          inputs: r.inputs,
          outputs: r.outputs,
          states: r.states,
          reset: r.reset,
          ...(r.description !== undefined ? { description: r.description } : {}),
          settings: { doubleChange: r.policy, ...(r.prefix !== undefined ? { prefix: r.prefix } : {}) },
          scenarios: [...r.scenarios],
        });
        r.cells.forEach((c, i) => {
          if (c.u < unspecified * 1000) return;
          const row = Math.floor(i / cols);
          t.next[i] = c.st < stable * 1000 ? row : c.next;
          let care = 0;
          let value = 0;
          c.bits.forEach(([roll, bit], k) => {
            if (roll < dontCare * 1000) return;
            care |= 1 << k;
            if (bit) value |= 1 << k;
          });
          t.outCare[i] = care >>> 0;
          t.outValue[i] = value >>> 0;
        });
        return t;
      });
  });
}
