/**
 * Writes `template-sources.ts` from the files under `templates/`, so the generator needs no file
 * system at run time (browser, bundled server, CLI alike). Run after editing a template:
 * `npx tsx src/lib/codegen/embed-templates.ts`. A test fails when the two disagree.
 */
import { readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('../../../templates/', import.meta.url));
const target = fileURLToPath(new URL('./template-sources.ts', import.meta.url));

/** Every `.hbs` file under `templates/`, by path relative to it (forward slashes), sorted. */
export function readTemplateFiles(dir: string = root): Record<string, string> {
  const out: Record<string, string> = {};
  const walk = (d: string): void => {
    for (const name of readdirSync(d).sort()) {
      const p = join(d, name);
      if (statSync(p).isDirectory()) walk(p);
      else if (name.endsWith('.hbs')) out[relative(dir, p).split('\\').join('/')] = readFileSync(p, 'utf8');
    }
  };
  walk(dir);
  return out;
}

/** The text of `template-sources.ts` for the given sources. */
export function renderTemplateModule(sources: Record<string, string>): string {
  const entries = Object.keys(sources)
    .sort()
    .map((k) => `  ${JSON.stringify(k)}: ${JSON.stringify(sources[k])},`);
  return [
    '/** Sources of the .hbs files under templates/, embedded by embed-templates.ts (do not edit by hand: edit the .hbs file and rerun it). */',
    'export const TEMPLATE_SOURCES: Readonly<Record<string, string>> = {',
    ...entries,
    '};',
    '',
  ].join('\n');
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  writeFileSync(target, renderTemplateModule(readTemplateFiles()));
  process.stdout.write(`wrote ${relative(process.cwd(), target)}\n`);
}
