/** Findings: the schema of one analysis result, its severity table, keys and deterministic order. */
import { z } from 'zod';

/** Severities, most serious first. */
export const SEVERITIES = ['error', 'warning', 'info'] as const;

/** Schema of a severity. */
export const severitySchema = z.enum(SEVERITIES);

/** error, warning or info. */
export type Severity = z.infer<typeof severitySchema>;

/**
 * Finding codes in report order. The first seven are the engine contract. `output-hazard` is
 * ours: a single-input change whose specified outputs are fine, but where a don't-care in a
 * transient cell could add a change if realized badly (output fill removes it).
 * `findings-truncated` closes a list that hit the per-code cap; it takes that code's severity
 * (SEVERITY_OF lists `info` for it only as a default).
 */
export const FINDING_CODES = [
  'unspecified-transition',
  'oscillation',
  'output-glitch',
  'unspecified-power-up',
  'unreachable-state',
  'order-dependent-double-change',
  'no-stable-state',
  'output-hazard',
  'findings-truncated',
] as const;

/** Schema of a finding code. */
export const findingCodeSchema = z.enum(FINDING_CODES);

/** One of FINDING_CODES. */
export type FindingCode = z.infer<typeof findingCodeSchema>;

/** Severity of each code. */
export const SEVERITY_OF: Record<FindingCode, Severity> = {
  'unspecified-transition': 'error',
  oscillation: 'error',
  'output-glitch': 'error',
  'unspecified-power-up': 'warning',
  'unreachable-state': 'warning',
  'order-dependent-double-change': 'warning',
  'no-stable-state': 'info',
  'output-hazard': 'info',
  'findings-truncated': 'info',
};

/** Role of a cell on a drawn path. */
export const PATH_STEP_KINDS = ['start', 'transient', 'stable', 'unspecified', 'repeat'] as const;

/**
 * One visited cell. `start` is the stable total state an event begins in (for power-up, the reset
 * cell when settling continues past it); `repeat` is the cell where an oscillation comes round again.
 */
export const pathStepSchema = z
  .object({
    state: z.string(),
    inputs: z.string(),
    kind: z.enum(PATH_STEP_KINDS),
    /** Output bits of the cell over `0 1 -`. */
    outputs: z.string().optional(),
  })
  .strict();

/** A cell on a drawn path. */
export type PathStep = z.infer<typeof pathStepSchema>;

/** Fix actions the UI can offer. */
export const FIX_ACTIONS = ['fill-outputs', 'add-cell', 'remove-state'] as const;

/** A suggested fix; `add-cell` names the cell and a suggested next state. */
export const fixSchema = z
  .object({
    action: z.enum(FIX_ACTIONS),
    label: z.string(),
    state: z.string().optional(),
    inputs: z.string().optional(),
    next: z.string().optional(),
  })
  .strict();

/** A suggested fix. */
export type Fix = z.infer<typeof fixSchema>;

/** One outcome of a double change: which order, the final stable state (null when settling failed), and its path. */
export const outcomeSchema = z
  .object({
    label: z.string(),
    state: z.string().nullable(),
    path: z.array(pathStepSchema),
  })
  .strict();

/** One outcome of a double change. */
export type Outcome = z.infer<typeof outcomeSchema>;

/** One analysis result. Location keys per code are listed in the engine contract. */
export const findingSchema = z
  .object({
    code: findingCodeSchema,
    severity: severitySchema,
    message: z.string(),
    state: z.string().optional(),
    from: z.string().optional(),
    inputs: z.string().optional(),
    output: z.string().optional(),
    cycle: z.array(z.string()).optional(),
    path: z.array(pathStepSchema),
    /** order-dependent-double-change: the three outcomes compared. */
    outcomes: z.array(outcomeSchema).optional(),
    /** findings-truncated: the code whose list was cut and how many were left out. */
    of: findingCodeSchema.optional(),
    omitted: z.number().int().optional(),
    fix: fixSchema.optional(),
  })
  .strict();

/** One analysis result. */
export type Finding = z.infer<typeof findingSchema>;

/** Most findings of one code that one analysis lists; the rest are counted in a `findings-truncated` finding. */
export const FINDINGS_PER_CODE = 500;

/** The identity of a finding across edits: code plus its location keys. */
export function findingToKey(f: Finding): string {
  return JSON.stringify([f.code, f.state ?? null, f.from ?? null, f.inputs ?? null, f.output ?? null, f.cycle ?? null, f.of ?? null]);
}

/** Rank of a code in report order. */
export function rankCode(code: FindingCode): number {
  return SEVERITIES.indexOf(SEVERITY_OF[code]) * 100 + FINDING_CODES.indexOf(code);
}
