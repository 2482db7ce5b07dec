// Monaco's ESM entry points by path: the API has the package's own declarations; the contributions
// are imported for their side effects only.
declare module 'monaco-editor/esm/vs/editor/editor.api.js' {
  export * from 'monaco-editor';
}
declare module 'monaco-editor/esm/vs/*';
