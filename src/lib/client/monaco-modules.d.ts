/** Side-effect modules of the local monaco-editor package that ship without type declarations. */
declare module 'monaco-editor/esm/vs/editor/editor.all.js';
declare module 'monaco-editor/esm/vs/basic-languages/cpp/cpp.contribution.js';
declare module 'monaco-editor/esm/vs/basic-languages/rust/rust.contribution.js';
declare module 'monaco-editor/esm/vs/editor/editor.worker.js?worker' {
  const WorkerFactory: new () => Worker;
  export default WorkerFactory;
}
