// A small writer of WebAssembly binary modules: the few instructions the SIMD butterflies use
// (core/simdColumns.ts), encoded as the WebAssembly core specification 2.0 and its fixed-width SIMD
// proposal lay them out. Written here so that the module is built from TypeScript source with no
// assembler or compiler as a build dependency; WebAssembly.validate checks what it produces.

export const I32 = 0x7f;
export const F64 = 0x7c;
export const V128 = 0x7b;
export type ValueType = typeof I32 | typeof F64 | typeof V128;

function unsignedLeb(n: number, out: number[]): void {
  do {
    let byte = n & 0x7f;
    n >>>= 7;
    if (n !== 0) byte |= 0x80;
    out.push(byte);
  } while (n !== 0);
}

function signedLeb(n: number, out: number[]): void {
  for (;;) {
    const byte = n & 0x7f;
    n >>= 7;
    const done = (n === 0 && (byte & 0x40) === 0) || (n === -1 && (byte & 0x40) !== 0);
    out.push(done ? byte : byte | 0x80);
    if (done) return;
  }
}

/** The body of one function: its parameters, locals and instructions, written by the methods. */
export class FunctionCode {
  readonly code: number[] = [];
  private readonly localTypes: ValueType[] = [];
  private count: number;

  constructor(readonly params: readonly ValueType[], readonly results: readonly ValueType[] = []) {
    this.count = params.length;
  }

  /** A new local of `type`; returns its index. */
  local(type: ValueType): number {
    this.localTypes.push(type);
    return this.count++;
  }

  private op(...bytes: number[]): this { this.code.push(...bytes); return this; }
  private simd(opcode: number): this { this.code.push(0xfd); unsignedLeb(opcode, this.code); return this; }

  get(l: number): this { this.op(0x20); unsignedLeb(l, this.code); return this; }
  set(l: number): this { this.op(0x21); unsignedLeb(l, this.code); return this; }
  tee(l: number): this { this.op(0x22); unsignedLeb(l, this.code); return this; }
  i32(value: number): this { this.op(0x41); signedLeb(value | 0, this.code); return this; }

  f64Const(value: number): this {
    this.op(0x44);
    const b = new DataView(new ArrayBuffer(8));
    b.setFloat64(0, value, true); // little-endian, as the format stores it
    for (let i = 0; i < 8; i++) this.code.push(b.getUint8(i));
    return this;
  }

  i32Add(): this { return this.op(0x6a); }
  i32Sub(): this { return this.op(0x6b); }
  i32Mul(): this { return this.op(0x6c); }
  i32DivU(): this { return this.op(0x6e); }
  i32And(): this { return this.op(0x71); }
  i32Shl(): this { return this.op(0x74); }
  i32ShrU(): this { return this.op(0x76); }
  i32Ctz(): this { return this.op(0x68); }
  i32ShrS(): this { return this.op(0x75); }
  i32Eqz(): this { return this.op(0x45); }
  i32Eq(): this { return this.op(0x46); }
  i32LtU(): this { return this.op(0x49); }
  i32GtU(): this { return this.op(0x4b); }
  i32LeU(): this { return this.op(0x4d); }
  i32GeU(): this { return this.op(0x4f); }
  select(): this { return this.op(0x1b); }

  /** f64.load / f64.store with 8-byte alignment and a constant byte offset. */
  f64Load(offset = 0): this { this.op(0x2b, 3); unsignedLeb(offset, this.code); return this; }
  /** i32.load with 4-byte alignment. */
  i32Load(offset = 0): this { this.op(0x28, 2); unsignedLeb(offset, this.code); return this; }
  f64Store(offset = 0): this { this.op(0x39, 3); unsignedLeb(offset, this.code); return this; }
  f64Mul(): this { return this.op(0xa2); }
  f64Neg(): this { return this.op(0x9a); }

  /** v128.load / v128.store; alignment hint 8 bytes (the arrays are Float64Arrays). */
  v128Load(offset = 0): this { this.simd(0x00); this.code.push(3); unsignedLeb(offset, this.code); return this; }
  v128Store(offset = 0): this { this.simd(0x0b); this.code.push(3); unsignedLeb(offset, this.code); return this; }
  /** v128.load64_zero: lane 0 from memory, lane 1 zero. */
  v128Load64Zero(offset = 0): this { this.simd(0x5d); this.code.push(3); unsignedLeb(offset, this.code); return this; }
  /** v128.load64_lane (address, vector -> vector with `lane` replaced from memory). */
  v128Load64Lane(lane: number, offset = 0): this { this.simd(0x57); this.code.push(3); unsignedLeb(offset, this.code); this.code.push(lane); return this; }
  /** v128.store64_lane (address, vector): stores lane `lane`. */
  v128Store64Lane(lane: number, offset = 0): this { this.simd(0x5b); this.code.push(3); unsignedLeb(offset, this.code); this.code.push(lane); return this; }
  f64x2Splat(): this { return this.simd(0x14); }
  f64x2Neg(): this { return this.simd(0xed); }
  f64x2Add(): this { return this.simd(0xf0); }
  f64x2Sub(): this { return this.simd(0xf1); }
  f64x2Mul(): this { return this.simd(0xf2); }
  f64x2Div(): this { return this.simd(0xf3); }
  f64x2Sqrt(): this { return this.simd(0xef); }
  /** Lane-wise a > b and a >= b: all ones where true. */
  f64x2Gt(): this { return this.simd(0x4a); }
  f64x2Ge(): this { return this.simd(0x4c); }
  v128Not(): this { return this.simd(0x4d); }
  v128Or(): this { return this.simd(0x50); }

  /** block ... end; `br`/`brIf` depth 0 inside leaves it. */
  block(body: () => void): this { this.op(0x02, 0x40); body(); return this.op(0x0b); }
  /** loop ... end; `br`/`brIf` depth 0 inside goes back to its start. */
  loop(body: () => void): this { this.op(0x03, 0x40); body(); return this.op(0x0b); }
  /** if (popped i32) then ... else ... end. */
  ifElse(then: () => void, otherwise?: () => void): this {
    this.op(0x04, 0x40);
    then();
    if (otherwise) { this.op(0x05); otherwise(); }
    return this.op(0x0b);
  }
  br(depth: number): this { this.op(0x0c); unsignedLeb(depth, this.code); return this; }
  brIf(depth: number): this { this.op(0x0d); unsignedLeb(depth, this.code); return this; }
  ret(): this { return this.op(0x0f); }

  /**
   * for (i = start; i < end; i += step) body, unsigned, with the values pushed by the callbacks
   * (end and step evaluated at every test and step).
   */
  forRange(i: number, start: () => void, end: () => void, step: () => void, body: () => void): this {
    start(); this.set(i);
    return this.block(() => {
      this.get(i); end(); this.i32GeU(); this.brIf(0);
      this.loop(() => {
        body();
        this.get(i); step(); this.i32Add(); this.tee(i); end(); this.i32LtU(); this.brIf(0);
      });
    });
  }

  /** The function body as the code section holds it: local declarations, instructions, end. */
  encode(): number[] {
    const body: number[] = [];
    const groups: [number, ValueType][] = [];
    for (const t of this.localTypes) {
      const last = groups[groups.length - 1];
      if (last && last[1] === t) last[0]++;
      else groups.push([1, t]);
    }
    unsignedLeb(groups.length, body);
    for (const [n, t] of groups) { unsignedLeb(n, body); body.push(t); }
    body.push(...this.code, 0x0b);
    const out: number[] = [];
    unsignedLeb(body.length, out);
    out.push(...body);
    return out;
  }
}

function section(id: number, content: number[], out: number[]): void {
  out.push(id);
  unsignedLeb(content.length, out);
  out.push(...content);
}

function name(s: string, out: number[]): void {
  unsignedLeb(s.length, out);
  for (let i = 0; i < s.length; i++) out.push(s.charCodeAt(i));
}

/**
 * A module importing one memory as `env.memory` (at least `minPages` of 64 KiB) and exporting
 * `functions` by name, in the binary format.
 */
export function moduleBytes(functions: readonly { name: string; code: FunctionCode }[], minPages = 0): Uint8Array {
  const out = [0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00];
  const types: number[] = [];
  unsignedLeb(functions.length, types);
  for (const { code } of functions) {
    types.push(0x60);
    unsignedLeb(code.params.length, types); types.push(...code.params);
    unsignedLeb(code.results.length, types); types.push(...code.results);
  }
  section(1, types, out);
  const imports: number[] = [1];
  name('env', imports); name('memory', imports);
  imports.push(0x02, 0x00);
  unsignedLeb(minPages, imports);
  section(2, imports, out);
  const funcs: number[] = [];
  unsignedLeb(functions.length, funcs);
  functions.forEach((_, i) => unsignedLeb(i, funcs));
  section(3, funcs, out);
  const exports: number[] = [];
  unsignedLeb(functions.length, exports);
  functions.forEach((f, i) => { name(f.name, exports); exports.push(0x00); unsignedLeb(i, exports); });
  section(7, exports, out);
  const codes: number[] = [];
  unsignedLeb(functions.length, codes);
  for (const { code } of functions) codes.push(...code.encode());
  section(10, codes, out);
  return Uint8Array.from(out);
}

/** The parts of the WebAssembly API the kernels use (core is typed without DOM or Node declarations). */
export interface WasmApi {
  validate(bytes: Uint8Array): boolean;
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports: object) => { exports: Record<string, unknown> };
  Memory: new (descriptor: { initial: number; maximum?: number }) => { buffer: ArrayBuffer };
}

/** The runtime's WebAssembly, or undefined where there is none. */
export function webAssembly(): WasmApi | undefined {
  return (globalThis as { WebAssembly?: WasmApi }).WebAssembly;
}

/** Bytes of a WebAssembly memory page. */
export const WASM_PAGE = 65536;

/** A module instantiated on a memory of its own (imported as env.memory). */
export interface InstanceOnMemory {
  readonly exports: Record<string, unknown>;
  readonly buffer: ArrayBuffer;
  /** The memory's size, whole pages. */
  readonly bytes: number;
  /** The exports of another module on the same memory; undefined where it does not validate or instantiate. */
  readonly alsoOnMemory: (code: Uint8Array) => Record<string, unknown> | undefined;
}

/**
 * A stretch [start, end) of a WebAssembly memory that several workspaces of one thread use in turn,
 * each only inside its own synchronous calls, so that whatever one leaves there the next may
 * overwrite. A flux kernel lends its workspace's bytes so (core/fluxKernel.ts): one thread's
 * transforms, pair sums and affine fits then need one scratch memory, not three.
 */
export interface SharedStretch {
  readonly buffer: ArrayBuffer;
  /** Byte offsets, 16-byte aligned. */
  readonly start: number;
  readonly end: number;
  /** The exports of a module bound to the memory, made once per key from `bytes()`; undefined where it cannot be had. */
  instantiate(key: string, bytes: () => Uint8Array): Record<string, unknown> | undefined;
}

/**
 * Modules bound to `made`'s memory by key, each made once (SharedStretch.instantiate); `ownKey`
 * names the module `made` was made with, whose exports it returns as they are.
 */
export function keyedInstances(made: InstanceOnMemory, ownKey?: string): SharedStretch['instantiate'] {
  const others = new Map<string, Record<string, unknown> | undefined>(ownKey === undefined ? [] : [[ownKey, made.exports]]);
  return (key, bytes) => {
    if (!others.has(key)) {
      let other: Record<string, unknown> | undefined;
      try { other = made.alsoOnMemory(bytes()); } catch { other = undefined; }
      others.set(key, other);
    }
    return others.get(key);
  };
}

/**
 * `code` instantiated on a fixed memory of at least `bytes`; undefined where WebAssembly is missing,
 * the module does not validate (no SIMD, say) or the memory cannot be had.
 */
export function instantiateOnMemory(code: Uint8Array, bytes: number): InstanceOnMemory | undefined {
  const wasm = webAssembly();
  if (!wasm) return undefined;
  try {
    if (!wasm.validate(code)) return undefined;
  } catch { return undefined; }
  const pages = Math.ceil(bytes / WASM_PAGE);
  if (pages > 65536) return undefined;
  try {
    const memory = new wasm.Memory({ initial: pages, maximum: pages });
    const exports = new wasm.Instance(new wasm.Module(code), { env: { memory } }).exports;
    const alsoOnMemory = (other: Uint8Array) => {
      try {
        return wasm.validate(other) ? new wasm.Instance(new wasm.Module(other), { env: { memory } }).exports : undefined;
      } catch { return undefined; }
    };
    return { exports, buffer: memory.buffer, bytes: pages * WASM_PAGE, alsoOnMemory };
  } catch { return undefined; }
}
