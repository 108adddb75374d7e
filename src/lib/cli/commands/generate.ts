/** `quiesce generate FILE --target c|rust (--out DIR | --zip FILE)`: write a firmware bundle. */
import { mkdir, writeFile } from 'node:fs/promises';
import { dirname, join, resolve, sep } from 'node:path';
import { generateBundle } from '../../codegen/bundle';
import { CODEGEN_TARGETS, codegenOptionsSchema } from '../../codegen/options';
import { FlowTableError } from '../../engine/model';
import { CliError, formatFlowTableError } from '../io';
import { FROM_OPTION } from './shared';
import type { CliCommand } from './types';

async function writeOut(path: string, data: string | Uint8Array): Promise<void> {
  try {
    await mkdir(dirname(path), { recursive: true });
    await writeFile(path, data);
  } catch (e) {
    throw new CliError(`cannot write ${path}: ${e instanceof Error ? e.message : String(e)}`);
  }
}

/** The generate command. */
export const command: CliCommand = {
  usage: `generate FILE --target ${CODEGEN_TARGETS.join('|')} (--out DIR | --zip FILE) [--prefix NAME] [--revision LABEL] [--from FORMAT]`,
  description:
    'Generates the interrupt-driven handler of a flow table with its unit tests, replay program, README and manifest: C99 (header, source, tests, Makefile) or a no_std Rust crate. --out writes the files into DIR, --zip writes the reproducible bundle zip. The same table and options always give the same bytes.',
  options: {
    target: { type: 'string', value: CODEGEN_TARGETS.join('|'), description: 'what to generate: c or rust' },
    out: { type: 'string', value: 'DIR', description: 'write the bundle files into DIR' },
    zip: { type: 'string', value: 'FILE', description: 'write the bundle as a zip to FILE' },
    prefix: { type: 'string', value: 'NAME', description: "C prefix and Rust crate name (default: the table's prefix setting, else its name)" },
    revision: { type: 'string', value: 'LABEL', description: 'revision label for the file headers, e.g. r3 (default: draft)' },
    from: FROM_OPTION,
  },
  positionals: { min: 1, max: 1 },
  async run(ctx) {
    const { target, out, zip, prefix, revision } = ctx.values;
    if (typeof target !== 'string') throw new CliError('generate: missing --target', `one of ${CODEGEN_TARGETS.join(', ')}`);
    if ((typeof out === 'string') === (typeof zip === 'string')) throw new CliError('generate: give exactly one of --out DIR and --zip FILE', `usage: quiesce ${command.usage}`);
    const parsed = codegenOptionsSchema.safeParse({
      target,
      ...(typeof prefix === 'string' ? { prefix } : {}),
      ...(typeof revision === 'string' ? { revision } : {}),
    });
    if (!parsed.success) {
      const issue = parsed.error.issues[0]!;
      const flag = `--${String(issue.path[0] ?? 'target')}`;
      throw new CliError(`generate: ${flag}: ${issue.code === 'invalid_enum_value' ? `${JSON.stringify(target)} is not a target` : issue.message}`, issue.code === 'invalid_enum_value' ? `one of ${CODEGEN_TARGETS.join(', ')}` : undefined);
    }
    const file = ctx.positionals[0]!;
    const { table } = await ctx.load(file);
    let bundle;
    try {
      bundle = await generateBundle(table, parsed.data);
    } catch (e) {
      if (!(e instanceof FlowTableError)) throw e;
      ctx.io.stderr(`${formatFlowTableError(file, e)}\n`);
      return 2;
    }
    if (typeof zip === 'string') {
      await writeOut(zip, bundle.zip);
      ctx.io.stdout(`wrote ${zip} (${bundle.files.length} files, ${bundle.zip.length} bytes, sha256 ${bundle.sha256})\n`);
      return 0;
    }
    const dir = resolve(out as string);
    for (const f of bundle.files) {
      const path = join(dir, f.path);
      if (!path.startsWith(dir + sep)) throw new CliError(`refusing to write outside ${out}: ${f.path}`);
      await writeOut(path, f.content);
    }
    ctx.io.stdout(`wrote ${bundle.files.length} files to ${out} (${bundle.manifest.options.prefix}, ${parsed.data.target}, revision ${parsed.data.revision})\n`);
    return 0;
  },
};
