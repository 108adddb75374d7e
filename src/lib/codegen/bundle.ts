/**
 * The codegen entry point: table + options -> files -> deterministic zip + manifest. The same
 * table and options give byte-identical zips on any machine: entries are sorted, every entry
 * has the same fixed date (1980-01-01 00:00 UTC, the DOS epoch) and permissions (0644), no
 * folder entries, DEFLATE at a fixed level, and nothing depends on the clock, time zone,
 * locale or paths.
 */
import JSZip from 'jszip';
import type { FlowTable } from '../engine/model';
import { compileMachine, type CompiledMachine } from './compile';
import type { IdentifierMap } from './identifiers';
import { codegenOptionsSchema, type CodegenOptions, type CodegenOptionsInput } from './options';
import { hashTable, sha256Hex } from './hash';
import { renderCFiles } from './targets/c';
import { SAFETY_CAUTION } from './targets/common';
import { renderRustFiles } from './targets/rust';

/** One generated file. */
export interface BundleFile {
  path: string;
  content: string;
}

/** The manifest.json of a bundle. */
export interface BundleManifest {
  format: 'quiesce-bundle';
  version: 1;
  generator: { name: 'quiesce'; version: string };
  controller: string;
  revision: string;
  target: CodegenOptions['target'];
  /** sha256 of the canonical interchange JSON of the table. */
  sourceSha256: string;
  options: { target: CodegenOptions['target']; prefix: string; revision: string; generatorVersion: string; doubleChange: string };
  identifiers: IdentifierMap;
  caution: string;
  /** Every other file of the bundle, sorted by path. */
  files: { path: string; bytes: number; sha256: string }[];
}

/** What `generateBundle` returns. */
export interface Bundle {
  /** Every file including manifest.json, sorted by path. */
  files: BundleFile[];
  zip: Uint8Array;
  manifest: BundleManifest;
  /** sha256 of the zip bytes. */
  sha256: string;
}

/** The DOS epoch: the fixed date of every zip entry. */
export const ZIP_DATE = new Date(Date.UTC(1980, 0, 1, 0, 0, 0));

/** DEFLATE level of every zip entry. */
export const ZIP_LEVEL = 9;

const encoder = new TextEncoder();

function comparePaths(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

/** Renders the files of one target for a compiled machine (manifest excluded). */
export function renderFiles(m: CompiledMachine, options: CodegenOptions, sourceHash: string): BundleFile[] {
  const files = options.target === 'c' ? renderCFiles(m, options, sourceHash) : renderRustFiles(m, options, sourceHash);
  return files.sort((a, b) => comparePaths(a.path, b.path));
}

/** Zips files deterministically (sorted entries, fixed date, permissions and compression level). */
export async function zipFiles(files: BundleFile[]): Promise<Uint8Array> {
  const zip = new JSZip();
  for (const f of [...files].sort((a, b) => comparePaths(a.path, b.path)))
    zip.file(f.path, encoder.encode(f.content), { date: ZIP_DATE, unixPermissions: 0o644, createFolders: false, binary: true });
  return zip.generateAsync({ type: 'uint8array', compression: 'DEFLATE', compressionOptions: { level: ZIP_LEVEL }, platform: 'UNIX', streamFiles: false });
}

/** Generates a bundle: validated options, compiled machine, rendered files, manifest and zip. */
export async function generateBundle(table: FlowTable, input: CodegenOptionsInput): Promise<Bundle> {
  const options = codegenOptionsSchema.parse(input);
  const machine = compileMachine(table, options.prefix !== undefined ? { prefix: options.prefix } : {});
  const sourceHash = hashTable(table);
  const rendered = renderFiles(machine, options, sourceHash);
  const manifest: BundleManifest = {
    format: 'quiesce-bundle',
    version: 1,
    generator: { name: 'quiesce', version: options.generatorVersion },
    controller: table.name,
    revision: options.revision,
    target: options.target,
    sourceSha256: sourceHash,
    options: {
      target: options.target,
      prefix: machine.identifiers.prefix,
      revision: options.revision,
      generatorVersion: options.generatorVersion,
      doubleChange: machine.policy,
    },
    identifiers: machine.identifiers,
    caution: SAFETY_CAUTION,
    files: rendered.map((f) => ({ path: f.path, bytes: encoder.encode(f.content).length, sha256: sha256Hex(f.content) })),
  };
  const files = [...rendered, { path: 'manifest.json', content: `${JSON.stringify(manifest, null, 2)}\n` }].sort((a, b) => comparePaths(a.path, b.path));
  const zip = await zipFiles(files);
  return { files, zip, manifest, sha256: sha256Hex(zip) };
}
