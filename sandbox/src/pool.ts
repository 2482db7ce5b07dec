// A warm pool of isolated-vm isolates. Each isolate has a memory limit, every call a time limit;
// an isolate that timed out, ran out of memory or broke is disposed and replaced, and the fault
// comes back as a SandboxError; one that has been handed more moved buffers than half its limit is
// recycled. The host process never runs the compiled code itself.
import ivm from 'isolated-vm';
import { Buffer } from 'node:buffer';
import { availableParallelism } from 'node:os';
import type { Definition } from '@isoledger/formulation';
import { compileDefinition, FIELD_REFS, type CompiledProgram, type FieldRef } from './compile';
import { SandboxError } from './errors';
import { BOOTSTRAP } from './runtime';
import type { Tabulation } from './tabulation';

export interface SandboxOptions {
  /** isolates kept warm (default: the number of cores, at most 4) */
  poolSize?: number;
  /** heap limit of each isolate in MB (default 128, at least 8) */
  memoryLimitMb?: number;
  /** time limit of each call in ms (default 2000) */
  timeoutMs?: number;
}

export interface EvaluateOptions {
  /**
   * Entries per point when the entries are laid out point-major (entry = point × nodes + node, the
   * layout for B and the per-node fields): a fault then names the point and the node.
   */
  nodes?: number;
}

/** Programs kept installed in one isolate; the least recently used is unloaded beyond this. */
const PROGRAMS_PER_ISOLATE = 64;
/** Compiled programs kept on the host. */
const HOST_PROGRAM_CACHE = 256;
/** Points in one tabulate call and entries in one evaluate call. */
const MAX_BATCH = 50_000_000;

interface Worker {
  isolate: ivm.Isolate;
  context: ivm.Context;
  run: ivm.Reference<(...args: unknown[]) => unknown>;
  installed: Map<string, true>;
  broken: boolean;
  /** the isolate's `__runMoved`, for a batch larger than the arena */
  runMoved: ivm.Reference<(...args: unknown[]) => unknown>;
  /** the arena shared with the isolate (inputs are written and results read here) */
  A: Float64Array;
  /** whether buffers were moved through this isolate since it was last checked */
  moved: boolean;
}

/**
 * Doubles in each isolate's shared arena: 8 MiB, or an eighth of the isolate's memory limit when
 * that is less (the arena counts against the limit). A batch whose input and results fit goes
 * through it without creating anything per call.
 */
const ARENA_DOUBLES = 1_048_576;
const arenaDoubles = (memoryLimitMb: number) => Math.min(ARENA_DOUBLES, (memoryLimitMb * 2 ** 20) / 8 / 8);

const isFloat64 = (v: unknown): v is Float64Array => v instanceof Float64Array;

/**
 * A Float64Array of `length` numbers in memory that is not cleared first: for a buffer whose every
 * number is written before anyone reads it (a program's input as `write` fills it, its results as
 * the program stores them), which saves clearing up to hundreds of MB per call. Buffer.allocUnsafe
 * of this size gets an ArrayBuffer of its own (never a slice of Node's shared pool), which can be
 * moved into an isolate.
 */
function uncleared(length: number): Float64Array {
  if (length * 8 <= Buffer.poolSize) return new Float64Array(length);
  const bytes = Buffer.allocUnsafe(length * 8);
  return new Float64Array(bytes.buffer, bytes.byteOffset, length);
}

/** Runs compiled formulation expressions inside isolates; the only place compiled user code runs. */
export class SandboxPool {
  private readonly size: number;
  private readonly memoryLimitMb: number;
  private readonly timeoutMs: number;
  private readonly idle: Worker[] = [];
  private readonly workers = new Set<Worker>();
  private readonly waiters: ((w: Worker) => void)[] = [];
  private starting = 0;
  private disposed = false;
  private readonly programs = new Map<string, CompiledProgram>();
  private readonly compiled = new WeakMap<Definition, CompiledProgram>();
  /** counters for monitoring and tests */
  readonly stats = {
    isolatesStarted: 0,
    isolatesReplaced: 0,
    isolatesRecycled: 0,
    calls: 0,
    programsInstalled: 0
  };

  constructor(opts: SandboxOptions = {}) {
    this.size = Math.max(1, Math.floor(opts.poolSize ?? Math.min(4, availableParallelism())));
    this.memoryLimitMb = Math.max(8, Math.floor(opts.memoryLimitMb ?? 128));
    this.timeoutMs = Math.max(1, opts.timeoutMs ?? 2000);
  }

  /** Starts every isolate of the pool now rather than on first use. */
  async warm(): Promise<void> {
    const held: Worker[] = [];
    for (let i = 0; i < this.size; i++) held.push(await this.acquire());
    held.forEach((w) => this.release(w));
  }

  /**
   * N and ∂N/∂ξ of every node at every point, in one isolate call.
   * points: count × dim natural coordinates, row-major. Result: N points × nodes, dN points × nodes × dim.
   */
  async tabulate(def: Definition, points: Float64Array): Promise<Tabulation> {
    const program = this.program(def);
    const { nodes, dim } = program;
    if (!isFloat64(points)) throw new SandboxError('invalid', 'points must be a Float64Array (count × dim)');
    if (points.length % dim !== 0)
      throw new SandboxError(
        'invalid',
        `points has ${points.length} numbers, not a multiple of the dimension ${dim}`
      );
    const count = points.length / dim;
    if (count > MAX_BATCH)
      throw new SandboxError('invalid', `${count} points in one call; the limit is ${MAX_BATCH}`);
    this.checkMemory(count * nodes * (dim + 1) + points.length, `tabulating ${count} points`);
    const { code, R } = await this.call(
      program,
      'tabulate',
      points.length,
      (I) => I.set(points),
      count * nodes * (dim + 1),
      count,
      `tabulating ${def.name}`
    );
    const N = R.subarray(0, count * nodes);
    const dN = R.subarray(count * nodes);
    if (code === -2) {
      const at = points.findIndex((v) => !Number.isFinite(v));
      throw new SandboxError('invalid', `point ${Math.floor(at / dim)} has a non-finite coordinate`, {
        point: Math.floor(at / dim)
      });
    }
    if (code !== -1) {
      const faultN = code >= 0 ? code : -1;
      const faultD = code <= -3 ? -3 - code : -1;
      const [q, i, k] =
        faultN >= 0
          ? [Math.floor(faultN / nodes), faultN % nodes, -1]
          : [Math.floor(faultD / (nodes * dim)), Math.floor(faultD / dim) % nodes, faultD % dim];
      const value = k < 0 ? N[faultN] : dN[faultD];
      const at = def.coordinates.map((c, j) => `${c} = ${+points[q * dim + j].toPrecision(12)}`).join(', ');
      const path = k < 0 ? `shape[${i}]` : `derivatives[${i}][${k}]`;
      const what = k < 0 ? `N${i + 1}` : `∂N${i + 1}/∂${def.coordinates[k]}`;
      throw new SandboxError(
        'non-finite',
        `${what} (${path}) of node ${i + 1} is ${value} at point ${q} (${at})${Number.isNaN(value) ? ', such as 0/0' : ', a division by zero'}`,
        { path, point: q, node: i }
      );
    }
    return { nodes, dim, points: count, N, dN };
  }

  /**
   * Batched evaluation of one field of a custom strain block at `count` entries: env maps each
   * symbol the field uses to a Float64Array of length `count` (a value per entry) or a number (the
   * same for all). For `B` one entry is one node at one point, so count = points × nodes with the
   * node index fastest (entry = point × nodes + node; pass `{ nodes }` to have faults name both),
   * and a whole mesh is one call with count = elements × points × nodes. E, nu, thickness and area
   * default to the definition's values. Result: count × (size of the value), row-major; B gives
   * components × dofs per entry, D components × components, rigid_modes modes × dofs, weight 1,
   * patch and convergence fields one value per dof.
   */
  async evaluate(
    def: Definition,
    field: FieldRef,
    env: Record<string, Float64Array | number>,
    count: number,
    opts: EvaluateOptions = {}
  ): Promise<Float64Array> {
    const program = this.program(def);
    if (!FIELD_REFS.includes(field))
      throw new SandboxError(
        'invalid',
        `unknown field '${String(field)}': the fields are ${FIELD_REFS.join(', ')}`
      );
    const compiled = program.fields[field];
    if (!compiled)
      throw new SandboxError('invalid', program.missing[field] ?? `${field} is not defined`, { path: field });
    if (!Number.isInteger(count) || count < 0 || count > MAX_BATCH)
      throw new SandboxError('invalid', `count must be a whole number from 0 to ${MAX_BATCH}, not ${count}`);
    const defaults: Record<string, number | undefined> = {
      E: def.material?.E,
      nu: def.material?.nu,
      thickness: def.thickness ?? 1,
      area: def.area ?? 1
    };
    const given = compiled.symbols.map((symbol) => {
      const v = Object.prototype.hasOwnProperty.call(env, symbol) ? env[symbol] : defaults[symbol];
      if (v === undefined)
        throw new SandboxError('invalid', `${field} uses '${symbol}' but no value was given for it`, {
          path: field
        });
      if (typeof v === 'number') {
        if (!Number.isFinite(v))
          throw new SandboxError('invalid', `'${symbol}' is ${v}; values must be finite`, { path: field });
        return v;
      }
      if (!isFloat64(v))
        throw new SandboxError('invalid', `'${symbol}' must be a Float64Array or a number`, { path: field });
      if (v.length !== count)
        throw new SandboxError('invalid', `'${symbol}' has ${v.length} values; count is ${count}`, {
          path: field
        });
      return v;
    });
    const arrays = given.filter(isFloat64).length;
    this.checkMemory(count * compiled.size + arrays * count, `evaluating ${field} at ${count} entries`);
    // one buffer for all inputs: L, (base, stride) per symbol, then V, the arrays first and the
    // constants after them
    const V = 2 * given.length;
    const write = (I: Float64Array) => {
      let next = 0;
      given.forEach((v, k) => {
        if (typeof v === 'number') return;
        I.set(v, V + next);
        I[2 * k] = next;
        I[2 * k + 1] = 1;
        next += count;
      });
      given.forEach((v, k) => {
        if (typeof v !== 'number') return;
        I[V + next] = v;
        I[2 * k] = next++;
        I[2 * k + 1] = 0;
      });
    };
    const { code: fault, R: O } = await this.call(
      program,
      compiled.entry,
      V + arrays * count + given.length - arrays,
      write,
      count * compiled.size,
      count,
      `evaluating ${field} of ${def.name}`
    );
    if (fault >= 0) {
      const entry = Math.floor(fault / compiled.size);
      const component = fault % compiled.size;
      const where = opts.nodes
        ? `point ${Math.floor(entry / opts.nodes)}, node ${(entry % opts.nodes) + 1}`
        : `entry ${entry}`;
      const row = Math.floor(component / compiled.cols);
      const col = component % compiled.cols;
      const position = compiled.size > 1 ? ` [${row}, ${col}]` : '';
      const value = O[fault];
      throw new SandboxError(
        'non-finite',
        `strain.${field}${position} is ${value} at ${where}${Number.isNaN(value) ? ', such as 0/0' : ', a division by zero'}`,
        {
          path: `strain.${field}`,
          point: opts.nodes ? Math.floor(entry / opts.nodes) : entry,
          ...(opts.nodes ? { node: entry % opts.nodes } : {})
        }
      );
    }
    return O;
  }

  /** Disposes every isolate; later calls are refused. */
  async dispose(): Promise<void> {
    this.disposed = true;
    for (const w of this.workers) this.kill(w);
    this.workers.clear();
    this.idle.length = 0;
    const waiting = this.waiters.splice(0);
    for (const resolve of waiting) resolve(null as unknown as Worker);
  }

  // -------------------------------------------------------------------------------------------

  private program(def: Definition): CompiledProgram {
    if (this.disposed) throw new SandboxError('internal', 'the sandbox pool has been disposed');
    const cached = typeof def === 'object' && def !== null ? this.compiled.get(def) : undefined;
    if (cached) return cached;
    let program: CompiledProgram;
    try {
      program = compileDefinition(def);
    } catch (error) {
      if (error instanceof SandboxError) throw error;
      throw new SandboxError('invalid', `the definition cannot be compiled: ${(error as Error).message}`);
    }
    const known = this.programs.get(program.key);
    if (known) {
      this.programs.delete(program.key);
      program = known;
    }
    this.programs.set(program.key, program);
    if (this.programs.size > HOST_PROGRAM_CACHE) this.programs.delete(this.programs.keys().next().value!);
    this.compiled.set(def, program);
    return program;
  }

  /**
   * Refuses a batch whose input and results, moved through the isolate, would not fit twice over in
   * what its memory limit leaves beside the arena: a moved buffer of the call before may still be
   * counted when the next one arrives.
   */
  private checkMemory(doubles: number, what: string) {
    const bytes = doubles * 8 * 2;
    const limit = this.memoryLimitMb * 2 ** 20;
    if (bytes > limit - arenaDoubles(this.memoryLimitMb) * 8)
      throw new SandboxError(
        'memory',
        `${what} needs about ${Math.ceil(bytes / 2 ** 20)} MB; the sandbox's limit is ${this.memoryLimitMb} MB: split the batch`
      );
  }

  private async start(): Promise<Worker> {
    const isolate = new ivm.Isolate({
      memoryLimit: this.memoryLimitMb,
      onCatastrophicError: () => {
        for (const w of this.workers) if (w.isolate === isolate) w.broken = true;
      }
    });
    try {
      const context = await isolate.createContext();
      // the bootstrap keeps ExternalCopy privately and deletes this global
      await context.global.set('_ivm', ivm);
      const script = await isolate.compileScript(BOOTSTRAP, { filename: 'isoledger-sandbox:bootstrap' });
      await script.run(context, { timeout: this.timeoutMs });
      script.release();
      const run = (await context.global.get('__run', { reference: true })) as ivm.Reference<
        (...args: unknown[]) => unknown
      >;
      const runMoved = (await context.global.get('__runMoved', { reference: true })) as ivm.Reference<
        (...args: unknown[]) => unknown
      >;
      const arena = new SharedArrayBuffer(arenaDoubles(this.memoryLimitMb) * 8);
      await context.evalClosure(
        'return __arena($0)',
        [new ivm.ExternalCopy(arena).copyInto({ release: true })],
        {
          timeout: this.timeoutMs
        }
      );
      const w: Worker = {
        isolate,
        context,
        run,
        runMoved,
        A: new Float64Array(arena),
        installed: new Map(),
        broken: false,
        moved: false
      };
      this.stats.isolatesStarted++;
      return w;
    } catch (error) {
      if (!isolate.isDisposed) isolate.dispose();
      throw new SandboxError('internal', `an isolate could not be started: ${(error as Error).message}`);
    }
  }

  private async acquire(): Promise<Worker> {
    if (this.disposed) throw new SandboxError('internal', 'the sandbox pool has been disposed');
    const free = this.idle.pop();
    if (free) return free;
    if (this.workers.size + this.starting < this.size) {
      this.starting++;
      try {
        const w = await this.start();
        if (this.disposed) {
          this.kill(w);
          throw new SandboxError('internal', 'the sandbox pool has been disposed');
        }
        this.workers.add(w);
        return w;
      } finally {
        this.starting--;
      }
    }
    const w = await new Promise<Worker>((resolve) => this.waiters.push(resolve));
    if (!w) throw new SandboxError('internal', 'the sandbox pool has been disposed');
    return w;
  }

  private release(w: Worker) {
    if (this.disposed) return;
    if (w.broken || w.isolate.isDisposed) {
      this.retire(w);
      return;
    }
    if (w.moved) {
      // a moved buffer stays counted against the isolate until the isolate collects the handle it
      // held, which isolated-vm's own collection at the limit does not always manage in time:
      // recycle the isolate before the count nears the limit
      w.moved = false;
      const heap = w.isolate.getHeapStatisticsSync();
      if (heap.externally_allocated_size + heap.used_heap_size > (this.memoryLimitMb * 2 ** 20) / 2) {
        this.retire(w, true);
        return;
      }
    }
    const next = this.waiters.shift();
    if (next) next(w);
    else this.idle.push(w);
  }

  /** Disposes a faulted isolate, or a sound one whose count of moved buffers grew; a waiting call gets a fresh one. */
  private retire(w: Worker, recycled = false) {
    this.kill(w);
    this.workers.delete(w);
    if (recycled) this.stats.isolatesRecycled++;
    else this.stats.isolatesReplaced++;
    const next = this.waiters.shift();
    if (next)
      this.acquire().then(next, () => {
        this.waiters.unshift(next);
      });
  }

  private kill(w: Worker) {
    w.broken = true;
    try {
      w.run.release();
    } catch {
      // already gone with its isolate
    }
    if (!w.isolate.isDisposed) w.isolate.dispose();
  }

  private async install(w: Worker, program: CompiledProgram) {
    if (w.installed.has(program.key)) {
      w.installed.delete(program.key);
      w.installed.set(program.key, true);
      return;
    }
    const script = await w.isolate.compileScript(
      `__install(${JSON.stringify(program.key)}, ${program.source});`,
      { filename: `isoledger-sandbox:${program.key}` }
    );
    await script.run(w.context, { timeout: this.timeoutMs });
    script.release();
    w.installed.set(program.key, true);
    this.stats.programsInstalled++;
    if (w.installed.size > PROGRAMS_PER_ISOLATE) {
      const oldest = w.installed.keys().next().value!;
      w.installed.delete(oldest);
      const unload = await w.isolate.compileScript(`__unload(${JSON.stringify(oldest)});`);
      await unload.run(w.context, { timeout: this.timeoutMs });
      unload.release();
    }
  }

  /** The program's code from a call's result; 'missing' means the isolate lost the program. */
  private codeOf(w: Worker, program: CompiledProgram, code: unknown, what: string): number {
    if (code === 'missing') w.installed.delete(program.key);
    if (typeof code !== 'number' || !Number.isInteger(code))
      throw new SandboxError('internal', `${what}: the sandbox returned no result`);
    return code;
  }

  /**
   * One call on one isolate: `write` fills the program's input of `inLength` numbers, the program
   * writes `outLength` results. A batch that fits the isolate's shared arena goes through it (the
   * input is written there, only numbers cross, the results are copied out); for a larger one the
   * host allocates the result buffer and moves it in, and gets it back without a copy, the input
   * still in the arena when it fits. Returns the program's code (-1, or where the first non-finite
   * value is) and the results.
   */
  private async call(
    program: CompiledProgram,
    entry: string,
    inLength: number,
    write: (input: Float64Array) => void,
    outLength: number,
    count: number,
    what: string
  ): Promise<{ code: number; R: Float64Array }> {
    this.stats.calls++;
    const w = await this.acquire();
    try {
      await this.install(w, program);
      if (inLength + outLength <= w.A.length) {
        write(w.A.subarray(0, inLength));
        const code = await w.run.apply(undefined, [program.key, entry, inLength, outLength, count], {
          timeout: this.timeoutMs
        });
        return { code: this.codeOf(w, program, code, what), R: w.A.slice(inLength, inLength + outLength) };
      }
      // the input goes through the arena when it fits, else it is written into a buffer moved in
      const I = inLength <= w.A.length ? null : uncleared(inLength);
      write(I ?? w.A.subarray(0, inLength));
      const R = uncleared(outLength);
      w.moved = true;
      const result = (await w.runMoved.apply(
        undefined,
        [
          program.key,
          entry,
          I === null
            ? inLength
            : new ivm.ExternalCopy(I, { transferOut: true }).copyInto({ release: true, transferIn: true }),
          new ivm.ExternalCopy(R, { transferOut: true }).copyInto({ release: true, transferIn: true }),
          count
        ],
        { timeout: this.timeoutMs, result: { copy: true } }
      )) as { code: unknown; R?: unknown };
      const code = this.codeOf(w, program, result?.code, what);
      if (!(result.R instanceof ivm.ExternalCopy))
        throw new SandboxError('internal', `${what}: the sandbox returned no result`);
      return { code, R: result.R.copy({ transferIn: true }) as Float64Array };
    } catch (error) {
      if (error instanceof SandboxError) throw error;
      w.broken = true;
      const message = (error as Error)?.message ?? String(error);
      if (/timed out/i.test(message))
        throw new SandboxError(
          'timeout',
          `${what} took longer than the sandbox's time limit of ${this.timeoutMs} ms`
        );
      if (w.isolate.isDisposed || /memory|allocation failed|disposed/i.test(message))
        throw new SandboxError(
          'memory',
          `${what} ran out of memory (the sandbox's limit is ${this.memoryLimitMb} MB): split the batch`
        );
      throw new SandboxError('internal', `${what} failed inside the sandbox: ${message}`);
    } finally {
      this.release(w);
    }
  }
}
