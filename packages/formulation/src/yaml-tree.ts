// The YAML layer: parse with source positions, refuse what a formulation never needs (anchors,
// aliases, tags, deep nesting), and turn the node tree into plain values while remembering where
// every value and key was written.
import { isAlias, isMap, isScalar, isSeq, parseDocument, type Node, type Pair, type Scalar } from 'yaml';
import { FORMAT_LIMITS } from './limits';

export type PathPart = string | number;

/** A problem at a source offset, before it becomes a line and column. */
export interface RawDiagnostic {
  offset: number;
  path: PathPart[];
  message: string;
  severity: 'error' | 'warning';
}

export interface Located {
  node?: Node;
  key?: Node;
}

export interface YamlTree {
  value: unknown;
  /** where the value at `path` (and its key) was written */
  at(path: PathPart[]): Located;
  diagnostics: RawDiagnostic[];
  /** true when YAML itself could not be read (the rest of validation is skipped) */
  broken: boolean;
}

export const pathKey = (path: readonly PathPart[]) => JSON.stringify(path);

/** `shape[2]`, `strain.B`, `nodes[3][1]` */
export function formatPath(path: readonly PathPart[]): string {
  let out = '';
  for (const part of path) out += typeof part === 'number' ? `[${part}]` : out === '' ? part : `.${part}`;
  return out;
}

const YAML_MESSAGES: Record<string, string> = {
  DUPLICATE_KEY: 'a field appears twice in the same mapping',
  MULTIPLE_DOCS: "the file holds more than one YAML document ('---'); a formulation is one document",
  TAB_AS_INDENT: 'tabs are not allowed as indentation in YAML; indent with spaces'
};

export function readYaml(source: string): YamlTree {
  const diagnostics: RawDiagnostic[] = [];
  const where = new Map<string, Located>();
  const doc = parseDocument(source, {
    keepSourceTokens: true,
    prettyErrors: false,
    uniqueKeys: true,
    strict: true,
    version: '1.2'
  });
  for (const e of doc.errors) {
    const raw = e.message.split('\n')[0];
    const message = /Maximum call stack/.test(raw)
      ? `YAML nesting is too deep (a formulation needs ${FORMAT_LIMITS.yamlDepth} levels at most)`
      : `YAML: ${YAML_MESSAGES[e.code] ?? raw}`;
    diagnostics.push({ offset: e.pos[0], path: [], message, severity: 'error' });
  }
  if (doc.errors.length > 0) return { value: undefined, at: () => ({}), diagnostics, broken: true };
  for (const w of doc.warnings)
    diagnostics.push({
      offset: w.pos[0],
      path: [],
      message: `YAML: ${w.message.split('\n')[0]}`,
      severity: 'warning'
    });

  const refuse = (node: Node, path: PathPart[], message: string) =>
    diagnostics.push({ offset: node.range?.[0] ?? 0, path, message, severity: 'error' });

  const convert = (node: Node | null, path: PathPart[], depth: number, key?: Node): unknown => {
    where.set(pathKey(path), { node: node ?? undefined, key });
    if (node === null) return null;
    if (depth > FORMAT_LIMITS.yamlDepth) {
      refuse(
        node,
        path,
        `YAML nesting is too deep (a formulation needs ${FORMAT_LIMITS.yamlDepth} levels at most)`
      );
      return null;
    }
    if (isAlias(node)) {
      refuse(node, path, `aliases ('*${node.source}') are not allowed in a formulation: write the value out`);
      return null;
    }
    if ((node as { anchor?: string }).anchor)
      refuse(
        node,
        path,
        `anchors ('&${(node as { anchor?: string }).anchor}') are not allowed in a formulation`
      );
    const tag = (node as { tag?: string }).tag;
    if (tag) {
      refuse(
        node,
        path,
        `tags ('${tag.replace('tag:yaml.org,2002:', '!!')}') are not allowed in a formulation`
      );
      return null;
    }
    if (isScalar(node)) {
      const v = node.value;
      if (typeof v === 'number' && !Number.isFinite(v)) {
        refuse(node, path, `'${node.source ?? String(v)}' is not a finite number`);
        return null;
      }
      if (typeof v === 'bigint') return Number(v);
      return v;
    }
    if (isSeq(node))
      return node.items.map((item, k) => convert(item as Node | null, [...path, k], depth + 1));
    if (isMap(node)) {
      const out: Record<string, unknown> = {};
      for (const pair of node.items as Pair<Node | null, Node | null>[]) {
        const k = pair.key;
        if (!k || !isScalar(k) || typeof k.value !== 'string') {
          if (k) refuse(k, path, 'field names must be plain text');
          continue;
        }
        if (
          (k as Scalar).type !== 'PLAIN' &&
          (k as Scalar).type !== 'QUOTE_DOUBLE' &&
          (k as Scalar).type !== 'QUOTE_SINGLE'
        ) {
          refuse(k, path, 'field names must be written on one line');
          continue;
        }
        // defineProperty keeps '__proto__' and friends ordinary own keys
        Object.defineProperty(out, k.value, {
          value: convert(pair.value, [...path, k.value], depth + 1, k),
          enumerable: true,
          writable: true,
          configurable: true
        });
      }
      return out;
    }
    refuse(node, path, 'unsupported YAML node');
    return null;
  };

  const contents = doc.contents as Node | null;
  if (!contents) {
    diagnostics.push({
      offset: 0,
      path: [],
      message:
        'the document is empty: a formulation needs format, name, title, cell, nodes, shape, strain and quadrature',
      severity: 'error'
    });
    return { value: undefined, at: () => ({}), diagnostics, broken: true };
  }
  const value = convert(contents, [], 0);
  return { value, at: (path) => where.get(pathKey(path)) ?? {}, diagnostics, broken: false };
}
