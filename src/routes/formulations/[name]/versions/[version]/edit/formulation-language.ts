// The editor's language for formulation documents: YAML structure, and inside the expression fields
// the math (numbers, operators, allowed functions, coordinates, the field's symbols, unknown names);
// completion of field names and of what each field allows; diagnostics as markers.
import type * as Monaco from 'monaco-editor';
import type { Diagnostic, FieldSymbols } from './workbench-types';

export const LANGUAGE_ID = 'isoledger-formulation';
export const THEME_ID = 'isoledger-ledger';
const MARKER_OWNER = 'isoledger-validate';

type MonacoApi = typeof Monaco;

interface FieldDoc {
  detail: string;
  insert?: string;
}

/** Top-level fields of format version 1, with the sentence shown beside each in the completion list. */
export const TOP_FIELDS: Record<string, FieldDoc> = {
  format: { detail: 'format version: the integer 1', insert: 'format: 1' },
  name: { detail: 'slug, unique in the registry: lower case, digits, hyphens' },
  title: { detail: 'one line, at most 120 characters' },
  summary: {
    detail: 'free text (Markdown) for the people who review and use the element',
    insert: 'summary: |\n  '
  },
  cell: { detail: 'reference cell: interval, triangle, quadrilateral, tetrahedron, hexahedron' },
  coordinates: { detail: 'names of the natural coordinates (default xi, eta, zeta)' },
  nodes: { detail: 'natural coordinates of each node, in node order' },
  definitions: {
    detail: 'helper values and one-line functions, evaluated before shape',
    insert: 'definitions:\n  - '
  },
  shape: { detail: 'one shape function per node, in the natural coordinates', insert: 'shape:\n  - ' },
  strain: { detail: 'a built-in strain kind, or a block with dofs, components, B and D' },
  quadrature: { detail: 'integration rule of the stiffness', insert: 'quadrature: { rule: ' },
  material: { detail: 'default check material', insert: 'material: { E: 1, nu: 0.3 }' },
  thickness: { detail: 'plane kinds: thickness, default 1' },
  area: { detail: 'bar: cross-section area, default 1' }
};

const STRAIN_FIELDS: Record<string, FieldDoc> = {
  dofs: { detail: 'names of the dofs at each node', insert: 'dofs: [u, v]' },
  components: { detail: 'names of the strain components (rows of B)', insert: 'components: [exx, eyy, gxy]' },
  B: { detail: 'strain–displacement block of one node: rows = components, columns = dofs', insert: 'B: "' },
  D: { detail: 'constitutive matrix', insert: 'D: "' },
  weight: { detail: 'integrand weight at a point; default detJ', insert: 'weight: "' },
  rigid_modes: {
    detail: 'zero-energy modes the element must have, as nodal dof values',
    insert: 'rigid_modes:\n    - '
  },
  patch: {
    detail: 'a constant-strain displacement field the element must reproduce',
    insert: 'patch:\n    displacement: ['
  },
  convergence: {
    detail: 'a smooth field and its body force, for observed orders',
    insert: 'convergence:\n    displacement: ['
  }
};

const QUADRATURE_FIELDS: Record<string, FieldDoc> = {
  rule: {
    detail: 'gauss (interval, quadrilateral, hexahedron), simplex (triangle, tetrahedron) or explicit'
  },
  points: { detail: 'gauss: points per direction (1–10); explicit: the list of points and weights' },
  degree: { detail: 'simplex: polynomial degree integrated exactly' }
};

const NESTED_FIELDS: Record<string, Record<string, FieldDoc>> = {
  strain: STRAIN_FIELDS,
  quadrature: QUADRATURE_FIELDS,
  material: { E: { detail: "Young's modulus" }, nu: { detail: "Poisson's ratio" } },
  patch: { displacement: { detail: 'one expression per dof, of constant strain' } },
  convergence: {
    displacement: { detail: 'one smooth expression per dof on the unit cell' },
    body_force: { detail: 'the body force of that field, one expression per dof' }
  }
};

const VALUES: Record<string, string[]> = {
  cell: ['interval', 'triangle', 'quadrilateral', 'tetrahedron', 'hexahedron'],
  strain: ['bar', 'plane-stress', 'plane-strain', 'axisymmetric', 'solid'],
  rule: ['gauss', 'simplex', 'explicit'],
  format: ['1']
};

/** Keys whose values are expressions, and the symbol table (format field) each uses. */
const EXPRESSION_KEYS: Record<string, string> = {
  nodes: 'nodes',
  definitions: 'definitions',
  shape: 'shape',
  B: 'B',
  D: 'D',
  weight: 'weight',
  rigid_modes: 'rigid_modes',
  displacement: 'patch.displacement',
  body_force: 'convergence.body_force'
};
const EXPRESSION_TABLES = [...new Set(Object.values(EXPRESSION_KEYS))];
/** The fields in which the names of `definitions` may be used. */
const HELPER_TABLES = new Set(['definitions', 'shape']);

const ALL_KEYS = [
  ...new Set([...Object.keys(TOP_FIELDS), ...Object.values(NESTED_FIELDS).flatMap((f) => Object.keys(f))])
];

/** Monarch reads a dot in a state name as a sub-state, so field names such as patch.displacement are spelled with '_'. */
const stateOf = (table: string) => `expr_${table.replace(/\./g, '_')}`;
const listOf = (table: string) => `sym_${table.replace(/\./g, '_')}`;

function escapeRe(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

/** The Monarch tokenizer for the document; the symbol lists come from the server's reading of the cell. */
export function monarchLanguage(symbols: FieldSymbols | null): Monaco.languages.IMonarchLanguage {
  const keyPrefix = '^(\\s*)((?:-\\s+)?)';
  const lists: Record<string, string[]> = {
    keys: ALL_KEYS,
    values: Object.values(VALUES).flat(),
    functions: symbols?.functions ?? [],
    coordinates: symbols?.coordinates ?? [],
    helpers: symbols?.helpers ?? []
  };
  const exprStates: Record<string, Monaco.languages.IMonarchLanguageRule[]> = {};
  for (const table of EXPRESSION_TABLES) {
    lists[listOf(table)] = symbols?.fields[table as keyof FieldSymbols['fields']] ?? [];
    exprStates[stateOf(table)] = [
      // a new key ends the expression field
      [/^(?=\s*(?:-\s+)?[A-Za-z_][\w-]*\s*:(?:\s|$))/, { token: '', next: '@pop' }],
      [/^\s*#.*$/, 'comment'],
      [/\s+#.*$/, 'comment'],
      [/^(\s*)(-)(?=\s|$)/, ['', 'delimiter.dash']],
      [/["']/, 'string.quote'],
      [/[|>][-+]?(?=\s*$)/, 'operator.block'],
      [/(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?/, 'number.math'],
      [
        /[A-Za-z_][A-Za-z0-9_]*/,
        {
          cases: {
            '@functions': 'function.math',
            '@coordinates': 'variable.coordinate',
            [`@${listOf(table)}`]: 'variable.symbol',
            ...(HELPER_TABLES.has(table) ? { '@helpers': 'variable.helper' } : {}),
            '@default': 'identifier.unknown'
          }
        }
      ],
      [/[+\-*/^=]/, 'operator.math'],
      [/[[\](){};,]/, 'delimiter.math'],
      [/\s+/, ''],
      [/./, 'invalid']
    ];
  }
  const keyRules: Monaco.languages.IMonarchLanguageRule[] = Object.entries(EXPRESSION_KEYS).map(
    ([key, table]) => [
      new RegExp(`${keyPrefix}(${escapeRe(key)})(\\s*)(:)(?=\\s|$)`),
      ['', 'delimiter.dash', 'key.expression', '', { token: 'delimiter', next: `@${stateOf(table)}` }]
    ]
  );
  return {
    defaultToken: '',
    tokenPostfix: '',
    ...lists,
    tokenizer: {
      root: [
        [/^\s*#.*$/, 'comment'],
        [/\s+#.*$/, 'comment'],
        [/^(summary)(\s*)(:)(?=\s|$)/, ['key', '', { token: 'delimiter', next: '@text' }]],
        ...keyRules,
        [
          new RegExp(`${keyPrefix}([A-Za-z_][\\w-]*)(\\s*)(:)(?=\\s|$)`),
          ['', 'delimiter.dash', { cases: { '@keys': 'key', '@default': 'key.unknown' } }, '', 'delimiter']
        ],
        [
          /([A-Za-z_][\w-]*)(\s*)(:)(?=\s)/,
          [{ cases: { '@keys': 'key', '@default': 'key.unknown' } }, '', 'delimiter']
        ],
        [/"(?:[^"\\]|\\.)*"/, 'string'],
        [/'(?:[^']|'')*'/, 'string'],
        [/-?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?(?![\w-])/, 'number'],
        [/(?:true|false|null)(?![\w-])/, 'keyword'],
        [/[{}[\],]/, 'delimiter'],
        [/[|>][-+]?(?=\s*$)/, 'operator.block'],
        [/[A-Za-z_][\w-]*/, { cases: { '@values': 'constant.value', '@default': 'string.plain' } }],
        [/\s+/, ''],
        [/./, 'string.plain']
      ],
      // the summary's free text, until the next key at the left margin
      text: [
        [/^(?=[A-Za-z_][\w-]*\s*:(?:\s|$))/, { token: '', next: '@pop' }],
        [/.+/, 'string.text']
      ],
      ...exprStates
    }
  };
}

/** Colours of our own, on the ledger paper. */
export function defineLedgerTheme(monaco: MonacoApi): void {
  monaco.editor.defineTheme(THEME_ID, {
    base: 'vs',
    inherit: true,
    rules: [
      { token: '', foreground: '1f2328' },
      { token: 'comment', foreground: '7b7463', fontStyle: 'italic' },
      { token: 'key', foreground: '235247', fontStyle: 'bold' },
      { token: 'key.expression', foreground: '235247', fontStyle: 'bold' },
      { token: 'key.unknown', foreground: 'a4442f', fontStyle: 'bold' },
      { token: 'delimiter', foreground: '6b6453' },
      { token: 'delimiter.dash', foreground: '6b6453' },
      { token: 'string', foreground: '5b5340' },
      { token: 'string.plain', foreground: '3a3f47' },
      { token: 'string.text', foreground: '4a4f57' },
      { token: 'string.quote', foreground: '9d927b' },
      { token: 'number', foreground: '7a5518' },
      { token: 'keyword', foreground: '7a5518' },
      { token: 'constant.value', foreground: '2f6f62', fontStyle: 'bold' },
      { token: 'operator.block', foreground: '9d927b' },
      { token: 'number.math', foreground: '7a5518' },
      { token: 'operator.math', foreground: '1f2328', fontStyle: 'bold' },
      { token: 'delimiter.math', foreground: '6b6453' },
      { token: 'function.math', foreground: '2a5a7c' },
      { token: 'variable.coordinate', foreground: '6a3d7a', fontStyle: 'bold' },
      { token: 'variable.symbol', foreground: '2f6f62' },
      { token: 'variable.helper', foreground: '3d6b35', fontStyle: 'italic' },
      { token: 'identifier.unknown', foreground: 'a4442f', fontStyle: 'underline' },
      { token: 'invalid', foreground: 'a4442f' }
    ],
    colors: {
      'editor.background': '#fbf9f4',
      'editor.foreground': '#1f2328',
      'editorLineNumber.foreground': '#9d927b',
      'editorLineNumber.activeForeground': '#1f2328',
      'editor.lineHighlightBackground': '#f3eee2',
      'editor.selectionBackground': '#cfe0d8',
      'editorCursor.foreground': '#235247',
      'editorIndentGuide.background1': '#e4dccb',
      'editorError.foreground': '#a4442f',
      'editorWarning.foreground': '#b5812a',
      'editorGutter.background': '#f6f3ec',
      'editorWidget.background': '#fbf9f4',
      'editorWidget.border': '#9d927b',
      'editorSuggestWidget.selectedBackground': '#e1ebe5',
      'editorSuggestWidget.highlightForeground': '#235247',
      focusBorder: '#2f6f62'
    }
  });
}

type Context =
  | { kind: 'key'; block: string | null }
  | { kind: 'value'; key: string }
  | { kind: 'expression'; table: string };

function indentOf(line: string): number {
  return /^\s*/.exec(line)![0].length;
}

/** The key that owns a line: the nearest line above and to the left that names a key (through list items). */
function parentKey(
  model: Monaco.editor.ITextModel,
  lineNumber: number,
  indent: number,
  isItem: boolean
): string | null {
  for (let n = lineNumber - 1; n >= 1; n--) {
    const text = model.getLineContent(n);
    const trimmed = text.trim();
    if (!trimmed || trimmed.startsWith('#')) continue;
    const own = indentOf(text);
    const key = /^\s*(?:-\s+)?([A-Za-z_][\w-]*)\s*:/.exec(text)?.[1] ?? null;
    if (own < indent) {
      if (key) return key;
      if (!trimmed.startsWith('-')) return null;
      // a continuation of a list item: the item's own parent owns it
      indent = own;
      isItem = true;
      continue;
    }
    // `key:` with its list items at the same indentation
    if (isItem && own === indent && key && !trimmed.startsWith('-')) return key;
  }
  return null;
}

/** Which kind of completion fits at the cursor. */
export function completionContext(model: Monaco.editor.ITextModel, position: Monaco.Position): Context {
  const line = model.getLineContent(position.lineNumber);
  const before = line.slice(0, position.column - 1);
  const indent = indentOf(line);

  // inside a flow mapping such as `quadrature: { rule: gauss, points: 2 }`
  const flow = /([A-Za-z_][\w-]*)\s*:\s*\{([^}]*)$/.exec(before);
  if (flow) {
    const inner = /(?:^|,)\s*([A-Za-z_][\w-]*)\s*:\s*([^,]*)$/.exec(flow[2]);
    if (inner)
      return EXPRESSION_KEYS[inner[1]]
        ? { kind: 'expression', table: EXPRESSION_KEYS[inner[1]] }
        : { kind: 'value', key: inner[1] };
    return { kind: 'key', block: flow[1] };
  }
  // `key: value` being typed on this line
  const keyed = /^\s*(?:-\s+)?([A-Za-z_][\w-]*)\s*:\s*(.*)$/.exec(before);
  if (keyed) {
    const key = keyed[1];
    if (EXPRESSION_KEYS[key]) return { kind: 'expression', table: EXPRESSION_KEYS[key] };
    return { kind: 'value', key };
  }
  const isItem = /^\s*-(?:\s|$)/.test(line);
  const parent = parentKey(model, position.lineNumber, indent, isItem);
  // a list item, or a continuation line, of an expression field
  if (parent && EXPRESSION_KEYS[parent]) return { kind: 'expression', table: EXPRESSION_KEYS[parent] };
  if (isItem) return { kind: 'value', key: parent ?? '' };
  // a key being typed at the start of a line
  return { kind: 'key', block: indent === 0 ? null : parent };
}

function keyItems(
  monaco: MonacoApi,
  fields: Record<string, FieldDoc>,
  range: Monaco.IRange,
  inFlow: boolean
): Monaco.languages.CompletionItem[] {
  return Object.entries(fields).map(([key, doc]) => ({
    label: key,
    kind: monaco.languages.CompletionItemKind.Field,
    detail: doc.detail,
    insertText: inFlow ? `${key}: ` : (doc.insert ?? `${key}: `),
    range
  }));
}

/** Completion items for the cursor's context: field names, fitting values, or the symbols and functions of the field. */
export function completionItems(
  monaco: MonacoApi,
  model: Monaco.editor.ITextModel,
  position: Monaco.Position,
  symbols: FieldSymbols | null
): Monaco.languages.CompletionItem[] {
  const word = model.getWordUntilPosition(position);
  const range = {
    startLineNumber: position.lineNumber,
    endLineNumber: position.lineNumber,
    startColumn: word.startColumn,
    endColumn: word.endColumn
  };
  const context = completionContext(model, position);
  const K = monaco.languages.CompletionItemKind;
  if (context.kind === 'key') {
    const inFlow = /\{[^}]*$/.test(model.getLineContent(position.lineNumber).slice(0, position.column - 1));
    if (context.block === null) return keyItems(monaco, TOP_FIELDS, range, false);
    const nested = NESTED_FIELDS[context.block];
    return nested ? keyItems(monaco, nested, range, inFlow) : [];
  }
  if (context.kind === 'value') {
    return (VALUES[context.key] ?? []).map((v) => ({ label: v, kind: K.EnumMember, insertText: v, range }));
  }
  const items: Monaco.languages.CompletionItem[] = [];
  const seen = new Set<string>();
  const add = (
    label: string,
    kind: Monaco.languages.CompletionItemKind,
    detail: string,
    insertText = label,
    snippet = false
  ) => {
    if (seen.has(label)) return;
    seen.add(label);
    items.push({
      label,
      kind,
      detail,
      insertText,
      insertTextRules: snippet ? monaco.languages.CompletionItemInsertTextRule.InsertAsSnippet : undefined,
      range
    });
  };
  const coords = new Set(symbols?.coordinates ?? []);
  for (const s of symbols?.fields[context.table as keyof FieldSymbols['fields']] ?? []) {
    add(
      s,
      coords.has(s) ? K.Variable : K.Constant,
      coords.has(s) ? 'natural coordinate' : `allowed in ${context.table}`
    );
  }
  if (HELPER_TABLES.has(context.table))
    for (const h of symbols?.helpers ?? []) add(h, K.Variable, 'from definitions');
  for (const f of symbols?.functions ?? []) add(f, K.Function, 'function', `${f}($0)`, true);
  return items;
}

/** Registers the language, its tokenizer, completion and theme once; returns a function that refreshes the symbol lists. */
export function registerFormulationLanguage(
  monaco: MonacoApi,
  currentSymbols: () => FieldSymbols | null
): (symbols: FieldSymbols | null) => void {
  if (!monaco.languages.getLanguages().some((l) => l.id === LANGUAGE_ID)) {
    monaco.languages.register({
      id: LANGUAGE_ID,
      extensions: ['.formulation.yaml'],
      aliases: ['Formulation document']
    });
    monaco.languages.setLanguageConfiguration(LANGUAGE_ID, {
      comments: { lineComment: '#' },
      brackets: [
        ['[', ']'],
        ['(', ')'],
        ['{', '}']
      ],
      autoClosingPairs: [
        { open: '[', close: ']' },
        { open: '(', close: ')' },
        { open: '{', close: '}' },
        { open: '"', close: '"', notIn: ['string'] }
      ],
      indentationRules: { increaseIndentPattern: /:\s*(#.*)?$/, decreaseIndentPattern: /^\s*$/ },
      wordPattern: /[A-Za-z_][\w-]*|-?\d+(?:\.\d+)?(?:[eE][+-]?\d+)?/
    });
    monaco.languages.registerCompletionItemProvider(LANGUAGE_ID, {
      triggerCharacters: [' ', '(', '*', '+', '-', '/', '^', '[', ','],
      provideCompletionItems: (model, position) => ({
        suggestions: completionItems(monaco, model, position, currentSymbols())
      })
    });
    defineLedgerTheme(monaco);
  }
  let last = '';
  const refresh = (symbols: FieldSymbols | null) => {
    const key = JSON.stringify(symbols);
    if (key === last) return;
    last = key;
    monaco.languages.setMonarchTokensProvider(LANGUAGE_ID, monarchLanguage(symbols));
  };
  refresh(currentSymbols());
  return refresh;
}

/** The diagnostics as editor markers: each spans the word at its position (or one character). */
export function setDiagnosticMarkers(
  monaco: MonacoApi,
  model: Monaco.editor.ITextModel,
  diagnostics: Diagnostic[]
): void {
  const lines = model.getLineCount();
  const markers = diagnostics.map((d) => {
    const line = Math.min(Math.max(1, d.line), lines);
    const maxColumn = model.getLineMaxColumn(line);
    const column = Math.min(Math.max(1, d.column), maxColumn);
    const word = model.getWordAtPosition({ lineNumber: line, column });
    const endColumn = word && word.startColumn === column ? word.endColumn : Math.min(column + 1, maxColumn);
    return {
      severity: d.severity === 'warning' ? monaco.MarkerSeverity.Warning : monaco.MarkerSeverity.Error,
      message: d.message,
      source: d.path || undefined,
      startLineNumber: line,
      startColumn: column,
      endLineNumber: line,
      endColumn: Math.max(endColumn, column + (column < maxColumn ? 1 : 0))
    };
  });
  monaco.editor.setModelMarkers(model, MARKER_OWNER, markers);
}
