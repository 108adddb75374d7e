/**
 * The `.qfl` source editor: local Monaco with our language, parse errors and findings as
 * markers, and state-name completion. Mount it `client:only="react"` (Monaco needs the DOM).
 */
import { useEffect, useMemo, useRef, useState } from 'react';
import Editor, { type OnMount } from '@monaco-editor/react';
import { completionStates, monaco, pickMonacoTheme, QFL_LANGUAGE, setupMonaco } from '../../lib/client/monaco-setup';
import type { EngineIssue, FlowTable } from '../../lib/engine/model';
import type { Finding } from '../../lib/engine/findings';
import { formatName } from '../../lib/engine/formats/names';

setupMonaco();

/** Props of the source editor. */
export interface SourceEditorProps {
  source: string;
  table: FlowTable;
  issues: EngineIssue[];
  findings: Finding[];
  readOnly: boolean;
  onChange: (text: string) => void;
  /** A model path, so completion knows whose states to offer. */
  path: string;
  height?: string;
}

/** Where a finding sits in the source: the row line of its state and, in grid form, its cell. */
export function locateFinding(source: string, f: Finding): { line: number; start: number; end: number } | null {
  if (!f.state) return null;
  const lines = source.split('\n');
  const name = formatName(f.state);
  let section: 'head' | 'grid' | 'cells' = 'head';
  let keys: string[] = [];
  for (let i = 0; i < lines.length; i++) {
    const raw = lines[i]!;
    const text = raw.replace(/#.*$/, '');
    const trimmed = text.trim();
    if (/^grid\b/.test(trimmed)) {
      section = 'grid';
      keys = trimmed.split(/\s+/).slice(1);
      continue;
    }
    if (/^cells\b/.test(trimmed)) {
      section = 'cells';
      continue;
    }
    if (section === 'head' || !trimmed.startsWith(name)) continue;
    const after = trimmed.slice(name.length);
    if (after !== '' && !/^\s/.test(after)) continue;
    const lead = text.indexOf(name);
    if (section === 'grid' && f.inputs !== undefined) {
      const k = keys.indexOf(f.inputs);
      const re = /\S+/g;
      let m: RegExpExecArray | null;
      let idx = -1;
      re.lastIndex = lead + name.length;
      while ((m = re.exec(text))) {
        idx++;
        if (idx === k) return { line: i + 1, start: m.index + 1, end: m.index + m[0].length + 1 };
      }
    }
    return { line: i + 1, start: lead + 1, end: lead + name.length + 1 };
  }
  return null;
}

/** The Monaco-based source editor island part. */
export default function SourceEditor(props: SourceEditorProps) {
  const { source, table, issues, findings, readOnly, onChange, path, height = '62vh' } = props;
  const editorRef = useRef<monaco.editor.IStandaloneCodeEditor | null>(null);
  const applying = useRef(false);
  const [mounted, setMounted] = useState(false);
  const uri = useMemo(() => monaco.Uri.parse(`inmemory://quiesce/${encodeURIComponent(path)}.qfl`), [path]);

  useEffect(() => {
    completionStates.set(uri.toString(), table.states);
  }, [uri, table.states]);

  // Reload the text when the model changed elsewhere (grid, undo), keeping the editor's own undo stack.
  useEffect(() => {
    const ed = editorRef.current;
    const model = ed?.getModel();
    if (!ed || !model || model.getValue() === source) return;
    applying.current = true;
    ed.pushUndoStop();
    ed.executeEdits('workbench', [{ range: model.getFullModelRange(), text: source, forceMoveMarkers: true }]);
    ed.pushUndoStop();
    applying.current = false;
  }, [source, mounted]);

  // Markers: parse problems (errors) or, when the source parses, findings at their rows.
  useEffect(() => {
    const model = editorRef.current?.getModel();
    if (!model) return;
    const markers: monaco.editor.IMarkerData[] = [];
    for (const i of issues) {
      const line = i.line ?? 1;
      const col = i.column ?? 1;
      const lineLen = line <= model.getLineCount() ? model.getLineMaxColumn(line) : col + 1;
      const word = model.getWordAtPosition({ lineNumber: Math.min(line, model.getLineCount()), column: col });
      markers.push({
        severity: monaco.MarkerSeverity.Error,
        message: `${i.message}${i.hint ? ` (${i.hint})` : ''}`,
        startLineNumber: line,
        startColumn: col,
        endLineNumber: line,
        endColumn: word ? Math.max(word.endColumn, col + 1) : Math.min(lineLen, col + 1),
        source: 'parse',
      });
    }
    if (!issues.length) {
      for (const f of findings) {
        const at = locateFinding(source, f);
        if (!at) continue;
        markers.push({
          severity: f.severity === 'error' ? monaco.MarkerSeverity.Error : f.severity === 'warning' ? monaco.MarkerSeverity.Warning : monaco.MarkerSeverity.Info,
          message: `${f.code}: ${f.message}`,
          startLineNumber: at.line,
          startColumn: at.start,
          endLineNumber: at.line,
          endColumn: at.end,
          source: 'findings',
        });
      }
    }
    monaco.editor.setModelMarkers(model, 'quiesce', markers);
  }, [issues, findings, source, mounted]);

  const onMount: OnMount = (ed) => {
    editorRef.current = ed;
    const model = ed.getModel();
    if (model && model.getValue() !== source) model.setValue(source);
    setMounted(true);
    const observer = new MutationObserver(() => monaco.editor.setTheme(pickMonacoTheme()));
    observer.observe(document.documentElement, { attributes: true, attributeFilter: ['data-theme'] });
    ed.onDidDispose(() => observer.disconnect());
  };

  return (
    <div className="border border-line rounded-md overflow-hidden" data-testid="source-editor">
      <Editor
        height={height}
        language={QFL_LANGUAGE}
        path={uri.toString()}
        defaultValue={source}
        theme={typeof document !== 'undefined' ? pickMonacoTheme() : 'vs'}
        onMount={onMount}
        onChange={(v) => {
          if (!applying.current && v !== undefined) onChange(v);
        }}
        options={{
          readOnly,
          domReadOnly: readOnly,
          fontFamily: 'Fira Code, ui-monospace, monospace',
          fontLigatures: false,
          fontSize: 14,
          minimap: { enabled: false },
          scrollBeyondLastLine: false,
          renderWhitespace: 'selection',
          tabSize: 2,
          insertSpaces: true,
          wordBasedSuggestions: 'off',
          automaticLayout: true,
          ariaLabel: readOnly ? 'Flow table source (read only)' : 'Flow table source',
          accessibilitySupport: 'auto',
          lineNumbersMinChars: 3,
        }}
        loading={<p className="p-4 text-sm text-ink-muted">Loading the source editor…</p>}
      />
    </div>
  );
}
