// parseFormulation: YAML → structure (zod) → meaning, field by field, every problem reported at once
// with the line and column where the author wrote it.
import type { AssignmentNode, FunctionAssignmentNode, MathNode } from 'mathjs';
import { canonicalJson, definitionHash, printExpression, sourceHash } from './canonical';
import { CELL_FACTS, STRAIN_DIMENSION, STRAIN_KINDS, insideCell } from './cells';
import { countNodes, differentiate } from './derivatives';
import {
  checkExpression,
  Locator,
  parseExpressionText,
  type ExpressionPolicy,
  type Helper,
  type ValueShape
} from './expression';
import { countSymbols, inline, inlinedDepth, inlinedSize, treeDepth, type InlineHelper } from './inline';
import { AUTHOR_FUNCTIONS, CELLS, FORMAT_LIMITS, PRINTED_EXPRESSION_LIMITS } from './limits';
import { evaluateConstant } from './numeric';
import { policyForField } from './policy';
import {
  allowedFields,
  customStrainSchema,
  describeValue,
  documentSchema,
  expectedPhrase,
  quadratureSchemas,
  REQUIRED_FIELDS,
  valueAt
} from './schema';
import { LineIndex, offsetOf, scalarMap } from './source-map';
import { describeCharacter, nameProblem } from './symbols';
import type {
  CellName,
  CustomStrain,
  Definition,
  Diagnostic,
  ExpressionField,
  ParseResult,
  Quadrature,
  StrainKind
} from './types';
import { formatPath, readYaml, type PathPart, type RawDiagnostic, type YamlTree } from './yaml-tree';
import type { Scalar } from 'yaml';

/** Two nodes closer than this (in natural coordinates) are the same node. */
const NODE_COINCIDENCE_TOLERANCE = 1e-12;
/** Explicit weights that miss the cell's measure by more than this (relative) get a warning. */
const WEIGHT_SUM_TOLERANCE = 1e-10;
/** Custom strain blocks: at most this many dofs per node and strain components (a shell has 6 and 8). */
const MAX_CUSTOM_DOFS = 8;
const MAX_CUSTOM_COMPONENTS = 12;

const utf8Length = (s: string) => new TextEncoder().encode(s).length;

/** The memo of derivatives: the catalogue and repeated validation of a draft differentiate the same functions. */
const DERIVATIVE_MEMO_SIZE = 4096;
const derivativeMemo = new Map<string, string>();
function memoDerivative(key: string, compute: () => string): string {
  const hit = derivativeMemo.get(key);
  if (hit !== undefined) {
    derivativeMemo.delete(key);
    derivativeMemo.set(key, hit);
    return hit;
  }
  const value = compute();
  derivativeMemo.set(key, value);
  if (derivativeMemo.size > DERIVATIVE_MEMO_SIZE) derivativeMemo.delete(derivativeMemo.keys().next().value!);
  return value;
}

interface ParsedExpr {
  node: MathNode;
  shape: ValueShape;
  uses: Set<string>;
}

class Context {
  readonly diagnostics: RawDiagnostic[] = [];
  readonly lines: LineIndex;
  tree!: YamlTree;
  constructor(readonly source: string) {
    this.lines = new LineIndex(source);
  }
  /** Offset of the value at `path`, else of its key, else of the closest enclosing value written. */
  offset(path: PathPart[], preferKey = false): number {
    for (let n = path.length; n >= 0; n--) {
      const at = this.tree?.at(path.slice(0, n));
      if (!at) continue;
      const pick = preferKey ? (at.key ?? at.node) : (at.node ?? at.key);
      if (pick?.range) return pick.range[0];
    }
    return 0;
  }
  error(path: PathPart[], message: string, offset = this.offset(path)) {
    this.diagnostics.push({ offset, path, message, severity: 'error' });
  }
  warn(path: PathPart[], message: string, offset = this.offset(path)) {
    this.diagnostics.push({ offset, path, message, severity: 'warning' });
  }
  hasDiagnosticAt(path: PathPart[]) {
    const key = formatPath(path);
    return this.diagnostics.some((d) => d.severity === 'error' && formatPath(d.path) === key);
  }
  get failed() {
    return this.diagnostics.some((d) => d.severity === 'error');
  }
  /** Parse and check the expression at `path` (text or a plain YAML number). */
  expression(path: PathPart[], value: unknown, policy: ExpressionPolicy): ParsedExpr | null {
    const at = this.tree.at(path).node;
    const isString = typeof value === 'string';
    const text = isString ? (value as string) : String(value);
    const map = isString && at && (at as Scalar).type ? scalarMap(this.source, at as Scalar) : null;
    const toOffset = (index: number) =>
      map
        ? offsetOf(map, index)
        : (at?.range?.[0] ?? this.offset(path)) + (isString ? 0 : Math.min(index, text.length));
    const parsed = parseExpressionText(text);
    for (const p of parsed.problems) this.error(path, p.message, toOffset(p.index));
    if (!parsed.node) return null;
    const locator = new Locator(parsed.node, text, parsed.start);
    const checked = checkExpression(parsed.node, text, policy, locator);
    for (const p of checked.problems) this.error(path, p.message, toOffset(p.index));
    if (checked.problems.length || !checked.shape) return null;
    return { node: parsed.node, shape: checked.shape, uses: checked.uses };
  }
  /** A constant (a YAML number or an expression of numbers and pi) as a finite number. */
  constant(path: PathPart[], value: unknown, label: string): number | null {
    if (typeof value === 'number') return value;
    const parsed = this.expression(path, value, constantPolicy(label));
    if (!parsed) return null;
    const v = evaluateConstant(parsed.node);
    if (!Number.isFinite(v)) {
      this.error(path, `${label} evaluates to ${v}; it must be a finite number`);
      return null;
    }
    return v;
  }
}

const constantPolicy = (label: string): ExpressionPolicy => ({
  symbols: new Set(['pi']),
  symbolHint: `${label} is a constant: only numbers, pi and the allowed functions`,
  functions: AUTHOR_FUNCTIONS,
  matrices: false,
  assignment: false,
  constantExponents: false,
  fieldLabel: label
});

const list = (names: readonly string[]) => names.join(', ');

function fieldPolicy(
  cell: CellName,
  coordinates: string[],
  field: ExpressionField,
  label: string,
  matrices: boolean
): ExpressionPolicy {
  return { ...policyForField(cell, coordinates, field, label), matrices };
}

/** Zod issues → diagnostics with the fields' own words. */
function structuralIssues(
  ctx: Context,
  issues: readonly {
    code: string;
    path: PropertyKey[];
    keys?: string[];
    expected?: string;
    message: string;
  }[],
  base: PathPart[],
  root: unknown
): Set<string> {
  const broken = new Set<string>();
  for (const issue of issues) {
    const path = [...base, ...(issue.path as PathPart[])];
    // a value already refused while reading the YAML (an alias, a tag) is not reported twice
    if (issue.code !== 'unrecognized_keys' && ctx.hasDiagnosticAt(path)) {
      broken.add(String(path[0] ?? ''));
      continue;
    }
    // an unknown key leaves the known ones worth checking
    if (issue.code !== 'unrecognized_keys') broken.add(String(path[0] ?? ''));
    if (issue.code === 'unrecognized_keys') {
      const allowed = allowedFields(path, valueAt(root, path));
      for (const key of issue.keys ?? []) {
        const where = formatPath(path);
        ctx.error(
          [...path, key],
          `unknown field '${key}'${where ? ` in ${where}` : ''}: the allowed fields are ${list(allowed)}`,
          ctx.offset([...path, key], true)
        );
      }
      continue;
    }
    const value = valueAt(root, path);
    const label = formatPath(path);
    if (issue.code === 'invalid_type' && value === undefined) {
      ctx.error(
        path,
        `missing required field '${String(path[path.length - 1])}'${path.length > 1 ? ` in ${formatPath(path.slice(0, -1))}` : ''}`,
        ctx.offset(path.slice(0, -1), true)
      );
    } else if (issue.code === 'invalid_type') {
      ctx.error(
        path,
        `${label} must be ${expectedPhrase(issue.expected ?? '')}, not ${describeValue(value)}`
      );
    } else if (issue.code === 'invalid_union') {
      ctx.error(path, `${label} must be text or a number, not ${describeValue(value)}`);
    } else {
      ctx.error(path, `${label}: ${issue.message}`);
    }
  }
  return broken;
}

/** Characters that must not appear anywhere: controls, and bidirectional controls that make text read unlike it parses. */
function characterProblems(ctx: Context, source: string) {
  let reported = 0;
  for (let i = 0; i < source.length && reported < 20; i++) {
    const cp = source.charCodeAt(i);
    const control = (cp < 0x20 && cp !== 0x09 && cp !== 0x0a && cp !== 0x0d) || (cp >= 0x7f && cp < 0xa0);
    const bidi = (cp >= 0x202a && cp <= 0x202e) || (cp >= 0x2066 && cp <= 0x2069);
    if (control || bidi) {
      ctx.error(
        [],
        `${describeCharacter(source[i])} is not allowed in a formulation document${bidi ? ' (it can make the text read differently from what it means)' : ''}`,
        i
      );
      reported++;
    }
  }
}

/** Parse, validate and normalise a formulation document (formulation-format.md). Never throws: every fault is a diagnostic. */
export function parseFormulation(source: string): ParseResult {
  if (typeof source !== 'string')
    return {
      ok: false,
      diagnostics: [{ line: 1, column: 1, path: '', message: 'the document must be text', severity: 'error' }]
    };
  try {
    return parseDocumentText(source);
  } catch (error) {
    const message =
      error instanceof RangeError
        ? 'the document nests too deeply to be processed'
        : `the document could not be processed: ${(error as Error)?.message ?? String(error)}`;
    return { ok: false, diagnostics: [{ line: 1, column: 1, path: '', message, severity: 'error' }] };
  }
}

function parseDocumentText(source: string): ParseResult {
  const ctx = new Context(source);
  const bytes = utf8Length(source);
  if (bytes > FORMAT_LIMITS.documentBytes) {
    return {
      ok: false,
      diagnostics: [
        {
          line: 1,
          column: 1,
          path: '',
          message: `the document is ${bytes} bytes; the limit is ${FORMAT_LIMITS.documentBytes} (64 KB)`,
          severity: 'error'
        }
      ]
    };
  }
  characterProblems(ctx, source);
  ctx.tree = readYaml(source);
  ctx.diagnostics.push(...ctx.tree.diagnostics);
  const root = ctx.tree.value;
  if (ctx.tree.broken) return finish(ctx, null);
  if (root === null || typeof root !== 'object' || Array.isArray(root)) {
    ctx.error(
      [],
      `a formulation document is a mapping of fields (${list(REQUIRED_FIELDS)}, …), not ${describeValue(root)}`
    );
    return finish(ctx, null);
  }
  const doc = root as Record<string, unknown>;
  const structure = documentSchema.safeParse(doc);
  const broken = structure.success
    ? new Set<string>()
    : structuralIssues(ctx, structure.error.issues, [], doc);
  const ok = (field: string) => !broken.has(field) && doc[field] !== undefined;

  // format, name, title, summary
  if (ok('format') && doc.format !== 1)
    ctx.error(['format'], `format must be 1 (the only version of the format), not ${String(doc.format)}`);
  if (ok('name') && !/^[a-z][a-z0-9-]{2,63}$/.test(doc.name as string))
    ctx.error(
      ['name'],
      `name must be a slug of 3–64 characters: a lowercase letter, then lowercase letters, digits or '-' (got '${String(doc.name).slice(0, 70)}')`
    );
  if (ok('title')) {
    const title = doc.title as string;
    if (title.trim() === '') ctx.error(['title'], 'title is empty');
    else if (/[\r\n]/.test(title.trimEnd())) ctx.error(['title'], 'title must be one line');
    else if ([...title].length > FORMAT_LIMITS.titleChars)
      ctx.error(
        ['title'],
        `title is ${[...title].length} characters; the limit is ${FORMAT_LIMITS.titleChars}`
      );
  }
  if (ok('summary') && utf8Length(doc.summary as string) > FORMAT_LIMITS.summaryBytes)
    ctx.error(
      ['summary'],
      `summary is ${utf8Length(doc.summary as string)} bytes; the limit is ${FORMAT_LIMITS.summaryBytes} (8 KB)`
    );

  // cell and coordinates
  let cell: CellName | null = null;
  if (ok('cell')) {
    if ((CELLS as readonly string[]).includes(doc.cell as string)) cell = doc.cell as CellName;
    else ctx.error(['cell'], `unknown cell '${String(doc.cell)}': the reference cells are ${list(CELLS)}`);
  }
  const facts = cell ? CELL_FACTS[cell] : null;
  let coordinates: string[] | null = facts ? [...facts.coordinates] : null;
  if (facts && ok('coordinates')) {
    const given = doc.coordinates as string[];
    let good = true;
    if (given.length !== facts.dim) {
      ctx.error(
        ['coordinates'],
        `${facts.phrase} has ${facts.dim} natural coordinate${facts.dim > 1 ? 's' : ''}; coordinates lists ${given.length}`
      );
      good = false;
    }
    given.forEach((name, k) => {
      const problem = nameProblem(name, 'coordinate');
      if (problem) {
        ctx.error(['coordinates', k], problem);
        good = false;
      } else if (given.indexOf(name) !== k) {
        ctx.error(['coordinates', k], `coordinate '${name}' is listed twice`);
        good = false;
      }
    });
    coordinates = good ? [...given] : null;
  } else if (!facts) coordinates = null;
  const coordText = coordinates ? list(coordinates) : '';

  // nodes
  let nodes: number[][] | null = null;
  if (ok('nodes')) {
    const raw = doc.nodes as unknown[][];
    if (raw.length === 0) ctx.error(['nodes'], 'nodes is empty: an element needs at least one node');
    else if (raw.length > FORMAT_LIMITS.nodes)
      ctx.error(['nodes'], `${raw.length} nodes; a formulation has ${FORMAT_LIMITS.nodes} nodes at most`);
    else if (facts && cell) {
      const values: number[][] = [];
      let good = true;
      raw.forEach((node, i) => {
        if (node.length !== facts.dim) {
          ctx.error(
            ['nodes', i],
            `node ${i + 1} has ${node.length} coordinate${node.length === 1 ? '' : 's'}; ${facts.phrase} needs ${facts.dim} (${coordText || facts.coordinates.join(', ')})`
          );
          good = false;
          return;
        }
        const point: number[] = [];
        node.forEach((c, k) => {
          const v = ctx.constant(['nodes', i, k], c, `node coordinate nodes[${i}][${k}]`);
          if (v === null) good = false;
          else point.push(v);
        });
        if (point.length !== facts.dim) return;
        if (!insideCell(cell!, point)) {
          ctx.error(
            ['nodes', i],
            `node ${i + 1} (${point.map((v) => +v.toPrecision(12)).join(', ')}) lies outside the reference ${cell}: ${facts.domain}`
          );
          good = false;
        }
        const twin = values.findIndex((q) =>
          q.every((v, k) => Math.abs(v - point[k]) <= NODE_COINCIDENCE_TOLERANCE)
        );
        if (twin >= 0) {
          ctx.error(['nodes', i], `node ${i + 1} coincides with node ${twin + 1}`);
          good = false;
        }
        values.push(point);
      });
      if (good) nodes = values;
    }
  }

  // definitions
  const helpers = new Map<string, InlineHelper>();
  const visible = new Map<string, Helper>();
  const definitionTexts: string[] = [];
  const failed = new Set<string>();
  let definitionsOk = true;
  if (ok('definitions') && coordinates && cell) {
    const raw = doc.definitions as string[];
    if (raw.length > FORMAT_LIMITS.definitions) {
      ctx.error(['definitions'], `${raw.length} definitions; the limit is ${FORMAT_LIMITS.definitions}`);
      definitionsOk = false;
    } else {
      // every definition's name is known first, so a forward reference is named as such
      const declared = raw.map((text) => {
        try {
          const n = parseExpressionText(String(text)).node;
          if (!n) return null;
          if (n.type === 'AssignmentNode' && (n as AssignmentNode).object.type === 'SymbolNode')
            return {
              name: (n as AssignmentNode).object.name,
              kind: 'value' as const,
              params: [] as string[]
            };
          if (n.type === 'FunctionAssignmentNode')
            return {
              name: (n as FunctionAssignmentNode).name,
              kind: 'function' as const,
              params: [...(n as FunctionAssignmentNode).params]
            };
        } catch {
          // reported when the definition itself is checked
        }
        return null;
      });
      declared.forEach((d, k) => {
        if (d && !visible.has(d.name))
          visible.set(d.name, { ...d, path: `definitions[${k}]`, visible: false });
      });
      raw.forEach((text, k) => {
        const path: PathPart[] = ['definitions', k];
        const d = declared[k];
        const policy: ExpressionPolicy = {
          symbols: new Set([...coordinates!, 'pi']),
          symbolHint: `${facts!.phrase} has coordinates ${coordText}${helpers.size ? `; the definitions before this one are ${list([...helpers.keys()])}` : ''}`,
          functions: AUTHOR_FUNCTIONS,
          helpers: visible,
          matrices: false,
          assignment: true,
          constantExponents: true,
          self: d?.name,
          params: d ? new Set(d.params) : undefined,
          fieldLabel: 'definitions'
        };
        const before = ctx.diagnostics.length;
        if (d) {
          const problem = nameProblem(d.name, 'definition');
          if (problem) ctx.error(path, problem);
          else if (coordinates!.includes(d.name))
            ctx.error(path, `'${d.name}' is a coordinate of this cell and cannot be redefined`);
          else if (visible.get(d.name)?.path !== `definitions[${k}]`)
            ctx.error(path, `'${d.name}' is defined twice (first in ${visible.get(d.name)!.path})`);
          d.params.forEach((p, j) => {
            const pp = nameProblem(p, 'parameter');
            if (pp) ctx.error(path, pp);
            else if (coordinates!.includes(p))
              ctx.error(
                path,
                `parameter '${p}' has the name of a coordinate; choose another name (such as s)`
              );
            else if (visible.has(p))
              ctx.error(path, `parameter '${p}' has the name of a definition; choose another name`);
            else if (d.params.indexOf(p) !== j) ctx.error(path, `parameter '${p}' is listed twice`);
          });
        }
        const parsed = ctx.expression(path, text, policy);
        const fail = () => {
          definitionsOk = false;
          if (d) failed.add(d.name);
          if (d && visible.get(d.name)?.path === `definitions[${k}]`) visible.get(d.name)!.visible = true;
        };
        if (!parsed || ctx.diagnostics.length > before || !d) return fail();
        // a definition built on one that failed is not expanded (its own problems show once that is fixed)
        if ([...parsed.uses].some((u) => failed.has(u))) return fail();
        const body =
          parsed.node.type === 'AssignmentNode'
            ? (parsed.node as AssignmentNode).value
            : (parsed.node as FunctionAssignmentNode).expr;
        const size = inlinedSize(body, helpers);
        const depth = inlinedDepth(body, helpers);
        if (size > FORMAT_LIMITS.inlinedNodes) {
          ctx.error(
            path,
            `'${d.name}' expands to ${size} terms when the definitions it uses are written out; the limit is ${FORMAT_LIMITS.inlinedNodes}`
          );
          return fail();
        }
        if (depth > FORMAT_LIMITS.inlinedDepth) {
          ctx.error(
            path,
            `'${d.name}' nests ${depth} levels deep when the definitions it uses are written out; the limit is ${FORMAT_LIMITS.inlinedDepth}`
          );
          return fail();
        }
        const inlined = inline(body, helpers);
        helpers.set(d.name, {
          name: d.name,
          kind: d.kind,
          params: d.params,
          body: inlined,
          size: countNodes(inlined),
          depth: treeDepth(inlined),
          occurrences: countSymbols(inlined, d.params)
        });
        visible.get(d.name)!.visible = true;
        definitionTexts.push(printExpression(parsed.node));
      });
    }
  }

  // shape functions and their derivatives
  let shape: string[] | null = null;
  let derivatives: string[][] | null = null;
  if (ok('shape') && coordinates && cell && definitionsOk) {
    const raw = doc.shape as unknown[];
    const nodeCount = Array.isArray(doc.nodes) ? (doc.nodes as unknown[]).length : null;
    if (raw.length === 0) ctx.error(['shape'], 'shape is empty: one function per node is needed');
    else if (raw.length > FORMAT_LIMITS.nodes)
      ctx.error(
        ['shape'],
        `${raw.length} shape functions; a formulation has ${FORMAT_LIMITS.nodes} nodes at most`
      );
    else {
      if (nodeCount !== null && nodeCount <= FORMAT_LIMITS.nodes && raw.length !== nodeCount)
        ctx.error(
          ['shape'],
          `shape has ${raw.length} function${raw.length === 1 ? '' : 's'} but nodes has ${nodeCount}: one shape function per node`
        );
      const names = [...helpers.keys()];
      const policy: ExpressionPolicy = {
        symbols: new Set([...coordinates, 'pi']),
        symbolHint: `${facts!.phrase} has coordinates ${coordText}${names.length ? `; the definitions are ${list(names)}` : ''}`,
        functions: AUTHOR_FUNCTIONS,
        helpers: visible,
        matrices: false,
        assignment: false,
        constantExponents: true,
        fieldLabel: 'shape'
      };
      const trees: (MathNode | null)[] = [];
      let total = 0;
      raw.forEach((text, i) => {
        const parsed = ctx.expression(['shape', i], text, policy);
        if (!parsed) return trees.push(null);
        const size = inlinedSize(parsed.node, helpers);
        total += size;
        if (size > FORMAT_LIMITS.inlinedNodes) {
          ctx.error(
            ['shape', i],
            `shape[${i}] expands to ${size} terms when the definitions are written out; the limit is ${FORMAT_LIMITS.inlinedNodes}`
          );
          return trees.push(null);
        }
        const depth = inlinedDepth(parsed.node, helpers);
        if (depth > FORMAT_LIMITS.inlinedDepth) {
          ctx.error(
            ['shape', i],
            `shape[${i}] nests ${depth} levels deep when the definitions are written out; the limit is ${FORMAT_LIMITS.inlinedDepth}`
          );
          return trees.push(null);
        }
        if (total > FORMAT_LIMITS.inlinedNodesTotal) {
          ctx.error(
            ['shape', i],
            `the shape functions expand to more than ${FORMAT_LIMITS.inlinedNodesTotal} terms together when the definitions are written out`
          );
          return trees.push(null);
        }
        trees.push(inline(parsed.node, helpers));
      });
      if (trees.every((t) => t) && !ctx.failed) {
        shape = [];
        derivatives = [];
        const derivativePolicy = policyForField(cell, coordinates, 'derivatives');
        // what the parser prints must read back within the limits the sandbox applies
        const readBack = (text: string, policy: ExpressionPolicy): string | null => {
          const again = parseExpressionText(text, PRINTED_EXPRESSION_LIMITS);
          if (!again.node) return again.problems[0]?.message ?? 'cannot be read back';
          const check = checkExpression(again.node, text, policy);
          return check.problems.length ? check.problems[0].message : null;
        };
        const shapePolicy = policyForField(cell, coordinates, 'shape');
        for (let i = 0; i < trees.length; i++) {
          const printed = printExpression(trees[i]!);
          shape.push(printed);
          const problem = readBack(printed, shapePolicy);
          if (problem) {
            ctx.error(
              ['shape', i],
              `shape[${i}] with the definitions written out is too complex: ${problem}`
            );
            derivatives.push([]);
            continue;
          }
          const row: string[] = [];
          for (const coord of coordinates) {
            try {
              const text = memoDerivative(`${coordinates.join(',')}\u0000${coord}\u0000${printed}`, () =>
                printExpression(differentiate(trees[i]!, coord))
              );
              const bad = readBack(text, derivativePolicy);
              if (bad) throw new Error(bad);
              row.push(text);
            } catch (error) {
              const message = (error as Error).message.replace(
                /^Cannot process function "(\w+)" in derivative.*$/,
                "'$1' has no symbolic derivative"
              );
              ctx.error(
                ['shape', i],
                `cannot differentiate shape[${i}] with respect to ${coord}: ${message}`
              );
              row.push('');
            }
          }
          derivatives.push(row);
        }
      }
    }
  }

  // strain
  let strain: StrainKind | CustomStrain | null = null;
  const thicknessGiven = doc.thickness !== undefined;
  const areaGiven = doc.area !== undefined;
  if (ok('strain')) {
    const s = doc.strain;
    if (typeof s === 'string') {
      if (!(STRAIN_KINDS as readonly string[]).includes(s))
        ctx.error(
          ['strain'],
          `unknown strain kind '${s}': the built-in kinds are ${list(STRAIN_KINDS)}, or write a custom block (dofs, components, B, D, …)`
        );
      else if (facts && STRAIN_DIMENSION[s as StrainKind] !== facts.dim) {
        const fits = CELLS.filter((c) => CELL_FACTS[c].dim === STRAIN_DIMENSION[s as StrainKind]);
        ctx.error(
          ['strain'],
          `${s} needs a ${STRAIN_DIMENSION[s as StrainKind]}-dimensional cell (${fits.join(' or ')}); this formulation's cell is ${facts.phrase}`
        );
      } else strain = s as StrainKind;
    } else if (s !== null && typeof s === 'object' && !Array.isArray(s)) {
      strain = customStrain(ctx, s as Record<string, unknown>, cell, coordinates, thicknessGiven, areaGiven);
    } else
      ctx.error(
        ['strain'],
        `strain must be a built-in kind (${list(STRAIN_KINDS)}) or a custom block, not ${describeValue(s)}`
      );
  }

  // quadrature
  const quadrature = ok('quadrature') ? quadratureOf(ctx, doc.quadrature, cell) : null;

  // material, thickness, area
  const material = { E: 1, nu: 0.3 };
  if (ok('material')) {
    const m = doc.material as { E?: unknown; nu?: unknown };
    if (m.E !== undefined) {
      const E = ctx.constant(['material', 'E'], m.E, 'material.E');
      if (E !== null && !(E > 0)) ctx.error(['material', 'E'], `material.E must be positive, not ${E}`);
      else if (E !== null) material.E = E;
    }
    if (m.nu !== undefined) {
      const nu = ctx.constant(['material', 'nu'], m.nu, 'material.nu');
      if (nu !== null && !(nu > -1 && nu < 0.5))
        ctx.error(
          ['material', 'nu'],
          `material.nu must lie in (-1, 0.5) for an isotropic elastic material, not ${nu}`
        );
      else if (nu !== null) material.nu = nu;
    }
  }
  let thickness: number | undefined;
  let area: number | undefined;
  const kind = typeof strain === 'string' ? strain : strain ? 'custom' : null;
  if (thicknessGiven && ok('thickness')) {
    if (kind && kind !== 'plane-stress' && kind !== 'plane-strain' && kind !== 'custom')
      ctx.error(
        ['thickness'],
        `thickness applies to the plane kinds (plane-stress, plane-strain) and custom blocks, not to ${kind}${kind === 'axisymmetric' ? ' (it integrates with the weight 2πr)' : ''}`
      );
    else {
      const t = ctx.constant(['thickness'], doc.thickness, 'thickness');
      if (t !== null && !(t > 0)) ctx.error(['thickness'], `thickness must be positive, not ${t}`);
      else if (t !== null) thickness = t;
    }
  }
  if (areaGiven && ok('area')) {
    if (kind && kind !== 'bar' && kind !== 'custom')
      ctx.error(['area'], `area applies to bar and custom blocks, not to ${kind}`);
    else {
      const a = ctx.constant(['area'], doc.area, 'area');
      if (a !== null && !(a > 0)) ctx.error(['area'], `area must be positive, not ${a}`);
      else if (a !== null) area = a;
    }
  }
  if (kind === 'custom' && thicknessGiven && areaGiven)
    ctx.error(['area'], 'a custom block takes thickness or area, not both');
  if ((kind === 'plane-stress' || kind === 'plane-strain') && thickness === undefined) thickness = 1;
  if (kind === 'bar' && area === undefined) area = 1;

  if (ctx.failed || !cell || !coordinates || !nodes || !shape || !derivatives || !strain || !quadrature)
    return finish(ctx, null);
  const definition: Definition = {
    format: 1,
    name: doc.name as string,
    title: (doc.title as string).trim(),
    ...(doc.summary !== undefined ? { summary: doc.summary as string } : {}),
    cell,
    coordinates,
    nodes,
    definitions: definitionTexts,
    shape,
    derivatives,
    strain,
    quadrature,
    material,
    ...(thickness !== undefined ? { thickness } : {}),
    ...(area !== undefined ? { area } : {})
  };
  return finish(ctx, definition);
}

function customStrain(
  ctx: Context,
  block: Record<string, unknown>,
  cell: CellName | null,
  coordinates: string[] | null,
  thicknessGiven: boolean,
  areaGiven: boolean
): CustomStrain | null {
  const structure = customStrainSchema.safeParse(block);
  const bad = new Set<string>();
  if (!structure.success) {
    structuralIssues(ctx, structure.error.issues, ['strain'], { strain: block });
    for (const issue of structure.error.issues)
      if (issue.code !== 'unrecognized_keys') bad.add(String(issue.path[0] ?? ''));
  }
  const ok = (f: string) => !bad.has(f) && block[f] !== undefined;
  const names = (field: 'dofs' | 'components', max: number, what: string): string[] | null => {
    if (!ok(field)) return null;
    const v = block[field] as string[];
    if (v.length === 0 || v.length > max) {
      ctx.error(
        ['strain', field],
        `strain.${field} lists ${v.length} names; between 1 and ${max} are allowed`
      );
      return null;
    }
    let good = true;
    v.forEach((n, k) => {
      const problem = nameProblem(n, what);
      if (problem) {
        ctx.error(['strain', field, k], problem);
        good = false;
      } else if (v.indexOf(n) !== k) {
        ctx.error(['strain', field, k], `'${n}' is listed twice`);
        good = false;
      }
    });
    return good ? v : null;
  };
  const dofs = names('dofs', MAX_CUSTOM_DOFS, 'dof');
  const components = names('components', MAX_CUSTOM_COMPONENTS, 'strain component');
  if (!cell || !coordinates) return null;
  const nd = dofs?.length ?? null;
  const nc = components?.length ?? null;
  const matrixText = (rows: number, cols: number) =>
    rows === 1 && cols === 1 ? 'a scalar or a 1 × 1 matrix' : `a ${rows} × ${cols} matrix`;
  const fits = (s: ValueShape, rows: number, cols: number) =>
    s.kind === 'scalar'
      ? rows === 1 && cols === 1
      : (s.rows === rows && s.cols === cols) ||
        (s.vector && ((rows === 1 && s.cols === cols) || (cols === 1 && s.cols === rows)));
  let good = true;
  const expr = (path: PathPart[], value: unknown, field: ExpressionField, matrices: boolean) => {
    const parsed = ctx.expression(
      path,
      value,
      fieldPolicy(cell, coordinates, field, formatPath(path), matrices)
    );
    if (!parsed) good = false;
    return parsed;
  };
  const shapeOf = (s: ValueShape) => (s.kind === 'scalar' ? 'a scalar' : `a ${s.rows} × ${s.cols} matrix`);
  let B: string | null = null;
  if (ok('B')) {
    const p = expr(['strain', 'B'], block.B, 'B', true);
    if (p && nc !== null && nd !== null && !fits(p.shape, nc, nd)) {
      ctx.error(
        ['strain', 'B'],
        `B is the block of one node: ${matrixText(nc, nd)} (components × dofs), not ${shapeOf(p.shape)}`
      );
      good = false;
    } else if (p) B = printExpression(p.node);
  }
  let D: string | null = null;
  if (ok('D')) {
    const p = expr(['strain', 'D'], block.D, 'D', true);
    if (p && nc !== null && !fits(p.shape, nc, nc)) {
      ctx.error(
        ['strain', 'D'],
        `D must be ${matrixText(nc, nc)} (components × components), not ${shapeOf(p.shape)}`
      );
      good = false;
    } else if (p) D = printExpression(p.node);
  }
  let weight: string | null = null;
  if (block.weight !== undefined && ok('weight')) {
    const p = expr(['strain', 'weight'], block.weight, 'weight', false);
    if (p) weight = printExpression(p.node);
  } else if (block.weight === undefined)
    weight =
      thicknessGiven && !areaGiven
        ? 'thickness * detJ'
        : areaGiven && !thicknessGiven
          ? 'area * detJ'
          : 'detJ';
  const vectorList = (
    path: PathPart[],
    values: unknown[],
    field: ExpressionField,
    label: string,
    matrices: boolean
  ): string[] | null => {
    const out: string[] = [];
    values.forEach((v, k) => {
      const p = expr([...path, k], v, field, matrices);
      if (!p) return;
      if (nd !== null && !fits(p.shape, nd, 1)) {
        ctx.error(
          [...path, k],
          `each ${label} gives the ${nd} dof${nd === 1 ? '' : 's'} of a node (${dofs!.join(', ')}), not ${shapeOf(p.shape)}`
        );
        good = false;
      } else out.push(printExpression(p.node));
    });
    return out.length === values.length ? out : null;
  };
  const rigid = ok('rigid_modes')
    ? vectorList(['strain', 'rigid_modes'], block.rigid_modes as unknown[], 'rigid_modes', 'rigid mode', true)
    : null;
  const components_ = (path: PathPart[], values: unknown[], field: ExpressionField): string[] | null => {
    if (nd !== null && values.length !== nd) {
      ctx.error(
        path,
        `${formatPath(path)} needs one expression per dof (${dofs!.join(', ')}): ${nd}, not ${values.length}`
      );
      good = false;
      return null;
    }
    const out: string[] = [];
    values.forEach((v, k) => {
      const p = expr([...path, k], v, field, false);
      if (p) out.push(printExpression(p.node));
    });
    return out.length === values.length ? out : null;
  };
  let patch: CustomStrain['patch'];
  if (block.patch !== undefined && ok('patch')) {
    const d = components_(
      ['strain', 'patch', 'displacement'],
      (block.patch as { displacement: unknown[] }).displacement,
      'patch.displacement'
    );
    if (d) patch = { displacement: d };
  }
  let convergence: CustomStrain['convergence'];
  if (block.convergence !== undefined && ok('convergence')) {
    const c = block.convergence as { displacement: unknown[]; body_force: unknown[] };
    const d = components_(
      ['strain', 'convergence', 'displacement'],
      c.displacement,
      'convergence.displacement'
    );
    const b = components_(['strain', 'convergence', 'body_force'], c.body_force, 'convergence.body_force');
    if (d && b) convergence = { displacement: d, body_force: b };
  }
  if (!good || bad.size || !structure.success || !dofs || !components || !B || !D || !weight || !rigid)
    return null;
  return {
    dofs,
    components,
    B,
    D,
    weight,
    rigid_modes: rigid,
    ...(patch ? { patch } : {}),
    ...(convergence ? { convergence } : {})
  };
}

function quadratureOf(ctx: Context, q: unknown, cell: CellName | null): Quadrature | null {
  const rules = Object.keys(quadratureSchemas) as (keyof typeof quadratureSchemas)[];
  if (q === null || typeof q !== 'object' || Array.isArray(q)) {
    ctx.error(
      ['quadrature'],
      `quadrature must be a mapping such as { rule: gauss, points: 2 }, not ${describeValue(q)}`
    );
    return null;
  }
  const rule = (q as { rule?: unknown }).rule;
  if (rule === undefined) {
    ctx.error(
      ['quadrature'],
      `missing required field 'rule' in quadrature: one of ${list(rules)}`,
      ctx.offset(['quadrature'], true)
    );
    return null;
  }
  if (!rules.includes(rule as keyof typeof quadratureSchemas)) {
    ctx.error(
      ['quadrature', 'rule'],
      `unknown quadrature rule '${String(rule)}': the rules are ${list(rules)}`
    );
    return null;
  }
  const r = rule as keyof typeof quadratureSchemas;
  const structure = quadratureSchemas[r].safeParse(q);
  if (!structure.success) {
    structuralIssues(ctx, structure.error.issues, ['quadrature'], { quadrature: q });
    // with only unknown fields the known ones are still checked
    if (structure.error.issues.some((i) => i.code !== 'unrecognized_keys')) return null;
  }
  const facts = cell ? CELL_FACTS[cell] : null;
  if (facts && r !== 'explicit' && facts.rule !== r) {
    ctx.error(
      ['quadrature', 'rule'],
      `the ${r} rule does not fit ${facts.phrase}: use ${facts.rule === 'gauss' ? '{ rule: gauss, points: n }' : '{ rule: simplex, degree: p }'} or an explicit rule`
    );
    return null;
  }
  if (r === 'gauss') {
    const n = (q as { points: number }).points;
    const { min, max } = FORMAT_LIMITS.gaussPoints;
    if (!Number.isInteger(n) || n < min || n > max) {
      ctx.error(
        ['quadrature', 'points'],
        `gauss points per direction must be a whole number from ${min} to ${max}, not ${n}`
      );
      return null;
    }
    return { rule: 'gauss', points: n };
  }
  if (r === 'simplex') {
    const p = (q as { degree: number }).degree;
    const max = cell === 'triangle' || cell === 'tetrahedron' ? FORMAT_LIMITS.simplexDegree[cell] : 8;
    if (!Number.isInteger(p) || p < 1 || p > max) {
      ctx.error(
        ['quadrature', 'degree'],
        `simplex degree must be a whole number from 1 to ${max}${cell ? ` on ${facts!.phrase}` : ''}, not ${p}`
      );
      return null;
    }
    return { rule: 'simplex', degree: p };
  }
  const raw = (q as { points: unknown[][] }).points;
  if (raw.length === 0) {
    ctx.error(['quadrature', 'points'], 'an explicit rule needs at least one point');
    return null;
  }
  if (raw.length > FORMAT_LIMITS.quadraturePoints) {
    ctx.error(
      ['quadrature', 'points'],
      `${raw.length} quadrature points; the limit is ${FORMAT_LIMITS.quadraturePoints}`
    );
    return null;
  }
  if (!facts || !cell) return null;
  const points: number[][] = [];
  let good = true;
  raw.forEach((pt, i) => {
    if (pt.length !== facts.dim + 1) {
      ctx.error(
        ['quadrature', 'points', i],
        `point ${i + 1} has ${pt.length} numbers; ${facts.phrase} needs ${facts.dim} coordinates then the weight`
      );
      good = false;
      return;
    }
    const values = pt.map((v, k) =>
      ctx.constant(['quadrature', 'points', i, k], v, `quadrature.points[${i}][${k}]`)
    );
    if (values.some((v) => v === null)) {
      good = false;
      return;
    }
    const nums = values as number[];
    if (!insideCell(cell, nums.slice(0, facts.dim))) {
      ctx.error(
        ['quadrature', 'points', i],
        `quadrature point ${i + 1} lies outside the reference ${cell}: ${facts.domain}`
      );
      good = false;
    }
    points.push(nums);
  });
  if (!good) return null;
  const sum = points.reduce((s, p) => s + p[facts.dim], 0);
  if (Math.abs(sum - facts.measure) > WEIGHT_SUM_TOLERANCE * facts.measure)
    ctx.warn(
      ['quadrature', 'points'],
      `the weights sum to ${+sum.toPrecision(12)}; the measure of the reference ${cell} is ${+facts.measure.toPrecision(12)}`
    );
  return { rule: 'explicit', points };
}

function finish(ctx: Context, definition: Definition | null): ParseResult {
  const seen = new Set<string>();
  const all: Diagnostic[] = [];
  for (const d of ctx.diagnostics) {
    const key = `${d.offset}\u0000${formatPath(d.path)}\u0000${d.message}`;
    if (seen.has(key)) continue;
    seen.add(key);
    const { line, column } = ctx.lines.position(d.offset);
    all.push({ line, column, path: formatPath(d.path), message: d.message, severity: d.severity });
  }
  all.sort(
    (a, b) =>
      a.line - b.line ||
      a.column - b.column ||
      (a.severity === b.severity ? 0 : a.severity === 'error' ? -1 : 1)
  );
  let diagnostics = all;
  if (all.length > FORMAT_LIMITS.diagnostics) {
    diagnostics = all.slice(0, FORMAT_LIMITS.diagnostics);
    const rest = all.length - FORMAT_LIMITS.diagnostics;
    const last = all[FORMAT_LIMITS.diagnostics];
    diagnostics.push({
      line: last.line,
      column: last.column,
      path: '',
      message: `${rest} more problem${rest === 1 ? '' : 's'} not shown`,
      severity: 'error'
    });
  }
  if (!definition || diagnostics.some((d) => d.severity === 'error')) return { ok: false, diagnostics };
  // the canonical JSON must exist for every definition the parser accepts
  canonicalJson(definition);
  return {
    ok: true,
    definition,
    sourceHash: sourceHash(ctx.source),
    definitionHash: definitionHash(definition),
    diagnostics
  };
}
