/** Options of one bundle generation, as a zod schema (the CLI and the server validate with it). */
import { z } from 'zod';
import pkg from '../../../package.json';

/** Generation targets. */
export const CODEGEN_TARGETS = ['c', 'rust'] as const;

/** Schema of a generation target. */
export const codegenTargetSchema = z.enum(CODEGEN_TARGETS);

/** A generation target. */
export type CodegenTarget = z.infer<typeof codegenTargetSchema>;

/** The generator version recorded in every header and manifest (from package.json). */
export const GENERATOR_VERSION: string = pkg.version;

/** Options accepted by `generateBundle`. */
export const codegenOptionsSchema = z
  .object({
    target: codegenTargetSchema,
    /** C prefix and Rust crate name; defaults to the table's `settings.prefix`, else its sanitized name. */
    prefix: z
      .string()
      .regex(/^[a-z][a-z0-9_]{0,31}$/, 'a prefix is 1 to 32 characters: a lowercase letter, then lowercase letters, digits or _')
      .optional(),
    /** Revision label written into every header, e.g. `r3` or `draft`. */
    revision: z
      .string()
      .regex(/^[A-Za-z0-9][A-Za-z0-9-]{0,31}$/, 'a revision label is 1 to 32 letters, digits or -, e.g. r3 or draft')
      .default('draft'),
    generatorVersion: z
      .string()
      .regex(/^[0-9A-Za-z.+-]{1,40}$/, 'a generator version is 1 to 40 characters of letters, digits, ".", "+" or "-"')
      .default(GENERATOR_VERSION),
  })
  .strict();

/** Options as given (defaults not yet applied). */
export type CodegenOptionsInput = z.input<typeof codegenOptionsSchema>;

/** Options with defaults applied. */
export type CodegenOptions = z.infer<typeof codegenOptionsSchema>;
