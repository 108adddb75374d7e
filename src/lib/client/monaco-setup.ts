/**
 * Monaco from the local `monaco-editor` package only: the editor core, the C and Rust
 * basic-language contributions, our own `.qfl` language, and the plain editor worker.
 * The language-service workers (TypeScript, CSS, HTML, JSON) are never imported; they would
 * add megabytes and nothing here needs them. Browser-only: import it from client:only islands.
 */
import 'monaco-editor/esm/vs/editor/editor.all.js';
import * as monaco from 'monaco-editor/esm/vs/editor/editor.api';
import 'monaco-editor/esm/vs/basic-languages/cpp/cpp.contribution.js';
import 'monaco-editor/esm/vs/basic-languages/rust/rust.contribution.js';
import EditorWorker from 'monaco-editor/esm/vs/editor/editor.worker.js?worker';
import { loader } from '@monaco-editor/react';
import { TEXT_KEYWORDS } from '../engine/formats/names';

/** Our language id for the `.qfl` text format. */
export const QFL_LANGUAGE = 'quiesce-flow';

/** Monaco theme names for light and dark pages. */
export const QFL_THEMES = { light: 'quiesce-light', dark: 'quiesce-dark' } as const;

let ready = false;

/** State names offered by completion, per model URI; the source editor keeps it current. */
export const completionStates = new Map<string, string[]>();

/** Registers our language, themes and worker once, and points the React wrapper at the local Monaco. */
export function setupMonaco(): typeof monaco {
  if (ready) return monaco;
  ready = true;
  (self as unknown as { MonacoEnvironment: monaco.Environment }).MonacoEnvironment = {
    getWorker: () => new EditorWorker(),
  };
  loader.config({ monaco });

  monaco.languages.register({ id: QFL_LANGUAGE, extensions: ['.qfl'], aliases: ['Quiesce flow', 'qfl'] });
  monaco.languages.setMonarchTokensProvider(QFL_LANGUAGE, {
    unicode: true,
    keywords: [...TEXT_KEYWORDS],
    policies: ['guarded', 'fault', 'stepwise', 'direct'],
    tokenizer: {
      root: [
        [/#.*$/, 'comment'],
        [/"(?:[^"\\]|\\.)*"/, 'string'],
        [/"/, 'string.invalid'],
        [/\/[01-]*/, 'number.bits'],
        [/[01-]+(?![^\s#])/, 'number.cube'],
        [
          /[\p{L}\p{N}_][\p{L}\p{N}_.\-]*/u,
          {
            cases: {
              '@keywords': 'keyword',
              '@policies': 'constant',
              '@default': 'identifier',
            },
          },
        ],
        [/\s+/, 'white'],
      ],
    },
  } as monaco.languages.IMonarchLanguage);
  monaco.languages.setLanguageConfiguration(QFL_LANGUAGE, {
    comments: { lineComment: '#' },
    brackets: [
      ['(', ')'],
      ['[', ']'],
      ['{', '}'],
    ],
    autoClosingPairs: [
      { open: '"', close: '"' },
      { open: '(', close: ')' },
      { open: '[', close: ']' },
    ],
    wordPattern: /[\p{L}\p{N}_][\p{L}\p{N}_.\-]*/u,
  });
  monaco.languages.registerCompletionItemProvider(QFL_LANGUAGE, {
    provideCompletionItems(model, position) {
      const word = model.getWordUntilPosition(position);
      const range = { startLineNumber: position.lineNumber, endLineNumber: position.lineNumber, startColumn: word.startColumn, endColumn: word.endColumn };
      const states = completionStates.get(model.uri.toString()) ?? [];
      const lineBefore = model.getLineContent(position.lineNumber).slice(0, position.column - 1).trimStart();
      const atLineStart = !/\s/.test(lineBefore) || lineBefore === word.word;
      const suggestions: monaco.languages.CompletionItem[] = states.map((s) => ({
        label: s,
        kind: monaco.languages.CompletionItemKind.EnumMember,
        detail: 'state',
        insertText: /^[\p{L}\p{N}_][\p{L}\p{N}_.\-]*$/u.test(s) ? s : JSON.stringify(s),
        range,
        sortText: `0${s}`,
      }));
      if (atLineStart)
        for (const k of TEXT_KEYWORDS)
          suggestions.push({ label: k, kind: monaco.languages.CompletionItemKind.Keyword, insertText: k, range, sortText: `1${k}` });
      if (/double-change\s+\S*$/.test(lineBefore))
        for (const p of ['guarded', 'fault', 'stepwise', 'direct'])
          suggestions.push({ label: p, kind: monaco.languages.CompletionItemKind.Value, insertText: p, range, detail: 'double-change policy', sortText: `0${p}` });
      return { suggestions };
    },
  });

  const common = [
    { token: 'comment', foreground: '6b7280', fontStyle: 'italic' },
    { token: 'keyword.unspecified', foreground: '9a3412' },
  ];
  monaco.editor.defineTheme(QFL_THEMES.light, {
    base: 'vs',
    inherit: true,
    rules: [
      ...common,
      { token: 'keyword', foreground: '07504c', fontStyle: 'bold' },
      { token: 'constant', foreground: '34479a' },
      { token: 'string', foreground: '7d5200' },
      { token: 'number', foreground: '34479a' },
      { token: 'number.cube', foreground: '34479a', fontStyle: 'bold' },
      { token: 'number.bits', foreground: '7d5200' },
      { token: 'type.stable', foreground: '2d6a1f', fontStyle: 'bold' },
      { token: 'identifier', foreground: '1b2230' },
    ],
    colors: { 'editor.background': '#ffffff', 'editorLineNumber.foreground': '#8c8778', 'editor.lineHighlightBackground': '#f6f5f1' },
  });
  monaco.editor.defineTheme(QFL_THEMES.dark, {
    base: 'vs-dark',
    inherit: true,
    rules: [
      ...common,
      { token: 'keyword', foreground: '86dcd3', fontStyle: 'bold' },
      { token: 'constant', foreground: 'aab8ff' },
      { token: 'string', foreground: 'f2bd5e' },
      { token: 'number', foreground: 'aab8ff' },
      { token: 'number.cube', foreground: 'aab8ff', fontStyle: 'bold' },
      { token: 'number.bits', foreground: 'f2bd5e' },
      { token: 'type.stable', foreground: '93d57d', fontStyle: 'bold' },
      { token: 'identifier', foreground: 'e4e8ec' },
    ],
    colors: { 'editor.background': '#161d25', 'editorLineNumber.foreground': '#6b7b8b', 'editor.lineHighlightBackground': '#1f2832' },
  });
  return monaco;
}

/** The Monaco theme matching the page's current colour theme. */
export function pickMonacoTheme(): string {
  const root = document.documentElement;
  const explicit = root.dataset.theme;
  const dark = explicit ? explicit === 'dark' : window.matchMedia?.('(prefers-color-scheme: dark)').matches;
  return dark ? QFL_THEMES.dark : QFL_THEMES.light;
}

export { monaco };
