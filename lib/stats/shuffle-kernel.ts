/**
 * The permutation sampler's two inner loops (see permutation-sampler.ts),
 * the partial shuffle and the Σ w x² tally, as a small WebAssembly module
 * assembled here from the instruction lists below: no build step, no binary
 * file, no dependency. Each is the JavaScript loop transcribed operation for
 * operation, so both give the same tables and sums (tests compare them).
 *
 * Why: in V8 every typed-array access in JavaScript re-checks that its
 * buffer was not detached once any buffer in the process has been (it had
 * been in every bench and test process looked at here; web streams detach
 * the buffers they transfer), and the 64-bit generator step is split into
 * 32-bit halves: the JavaScript shuffle spent more instructions on that than
 * on the shuffle itself (about 250 per generator step against 110 here).
 * WebAssembly has 64-bit integers and bounds-checks its memory with guard
 * pages.
 *
 * Memory (one fixed 320 KiB memory, exported, never grown, so views on it
 * stay valid): UNITS u16 × 16,384 at byte 0, CELLS u16 × 16,384 at 32,768,
 * META i32 × 16,384 at 65,536, WEIGHTS f64 × 16,384 at 131,072, LABEL_SIZE
 * i32 × 8,192 at 262,144, LEFT u16 × 8,192 at 294,912 (the last block's
 * counts, written by the tally), the generator state s0, s1 (two i64,
 * little-endian) at 311,296.
 */

/** Byte offsets of the kernel's memory layout (see the module comment). */
export const KERNEL_LAYOUT = {
  units: 0,
  cells: 32_768,
  meta: 65_536,
  weights: 131_072,
  labelSize: 262_144,
  left: 294_912,
  state: 311_296,
  pages: 5,
} as const;

/** The assembled kernel: its memory, the shuffle and the tally. */
export interface ShuffleKernel {
  memory: WebAssembly.Memory;
  /** The batched partial shuffle of permutation-sampler.ts over positions 0..m−1 of n. */
  shuffle(n: number, m: number): void;
  /** The tally of permutation-sampler.ts: Σ w x², the last block's counts into LEFT, CELLS cleared. */
  tally(labels: number, cells: number): number;
}

// Opcodes (WebAssembly core specification 1.0, §5.4).
const OP = {
  block: 0x02,
  loop: 0x03,
  br: 0x0c,
  brIf: 0x0d,
  end: 0x0b,
  localGet: 0x20,
  localSet: 0x21,
  localTee: 0x22,
  i32Load: 0x28,
  i64Load: 0x29,
  i32Load16U: 0x2f,
  f64Load: 0x2b,
  i64Store: 0x37,
  i32Store16: 0x3b,
  i32Const: 0x41,
  i64Const: 0x42,
  i32LtS: 0x48,
  i32GeS: 0x4e,
  i32Add: 0x6a,
  i32Sub: 0x6b,
  i32Mul: 0x6c,
  i32And: 0x71,
  i32Or: 0x72,
  i32Shl: 0x74,
  i32ShrU: 0x76,
  i64Add: 0x7c,
  f64Add: 0xa0,
  f64Mul: 0xa2,
  f64ConvertI32S: 0xb7,
  i64Xor: 0x85,
  i64Shl: 0x86,
  i64ShrU: 0x88,
  i64Rotl: 0x89,
  i32WrapI64: 0xa7,
} as const;
// memory.fill (bulk memory operations, WebAssembly 2.0 §5.4.6; in V8 since 2020).
const MEMORY_FILL = [0xfc, 0x0b, 0x00];
const VOID = 0x40;
const I32 = 0x7f;
const I64 = 0x7e;
const F64 = 0x7c;

function unsignedLeb(value: number): number[] {
  const out: number[] = [];
  do {
    let byte = value & 0x7f;
    value >>>= 7;
    if (value !== 0) byte |= 0x80;
    out.push(byte);
  } while (value !== 0);
  return out;
}

function signedLeb(value: number): number[] {
  const out: number[] = [];
  for (;;) {
    const byte = value & 0x7f;
    value >>= 7;
    if ((value === 0 && (byte & 0x40) === 0) || (value === -1 && (byte & 0x40) !== 0)) {
      out.push(byte);
      return out;
    }
    out.push(byte | 0x80);
  }
}

const vector = (items: number[][]): number[] => [...unsignedLeb(items.length), ...items.flat()];
const section = (id: number, body: number[]): number[] => [id, ...unsignedLeb(body.length), ...body];
const name = (text: string): number[] => vector(Array.from(text, (ch) => [ch.charCodeAt(0)]));

// Locals: parameters n, m, then the i32 and i64 locals below.
const N = 0;
const M = 1;
const I = 2;
const B = 3;
const Q = [4, 5, 6];
const E = [7, 8, 9];
const J = 10;
const T = 11;
const LO = 12;
const HI = 13;
const CELL = 14;
const S0 = 15;
const S1 = 16;
const OUT = 17;
const A = 18;
const I32_LOCALS = 13;
const I64_LOCALS = 4;

const get = (local: number) => [OP.localGet, local];
const set = (local: number) => [OP.localSet, local];
const i32 = (value: number) => [OP.i32Const, ...signedLeb(value)];
const i64 = (value: number) => [OP.i64Const, ...signedLeb(value)];
// memarg: alignment exponent, then the constant offset.
const load16 = (offset: number) => [OP.i32Load16U, 1, ...unsignedLeb(offset)];
const store16 = (offset: number) => [OP.i32Store16, 1, ...unsignedLeb(offset)];
const load32 = (offset: number) => [OP.i32Load, 2, ...unsignedLeb(offset)];

// One pick k (0, 1, 2): j = i + (q_k >>> 16); swap units i and j; count the
// unit now at i in cell (e_k >>> 16) + unit; i++. Exactly the JavaScript shuffle's pick.
function pick(k: number): number[] {
  return [
    ...get(I), ...get(Q[k]), ...i32(16), OP.i32ShrU, OP.i32Add, ...set(J),
    ...get(J), ...i32(1), OP.i32Shl, ...load16(KERNEL_LAYOUT.units), ...set(T),
    ...get(J), ...i32(1), OP.i32Shl, ...get(I), ...i32(1), OP.i32Shl, ...load16(KERNEL_LAYOUT.units), ...store16(KERNEL_LAYOUT.units),
    ...get(I), ...i32(1), OP.i32Shl, ...get(T), ...store16(KERNEL_LAYOUT.units),
    ...get(E[k]), ...i32(16), OP.i32ShrU, ...get(T), OP.i32Add, ...i32(1), OP.i32Shl, OP.localTee, CELL,
    ...get(CELL), ...load16(KERNEL_LAYOUT.cells), ...i32(1), OP.i32Add, ...store16(KERNEL_LAYOUT.cells),
    ...get(I), ...i32(1), OP.i32Add, ...set(I),
  ];
}

// (q_k & 0xffff) − (e_k & 0xffff): negative when pick k's low part falls below its Lemire threshold.
const lowMinusThreshold = (k: number) => [...get(Q[k]), ...i32(0xffff), OP.i32And, ...get(E[k]), ...i32(0xffff), OP.i32And, OP.i32Sub];

function shuffleBody(): number[] {
  const stateAddress = i32(0);
  return [
    ...stateAddress, OP.i64Load, 3, ...unsignedLeb(KERNEL_LAYOUT.state), ...set(S0),
    ...stateAddress, OP.i64Load, 3, ...unsignedLeb(KERNEL_LAYOUT.state + 8), ...set(S1),
    OP.block, VOID,
    OP.loop, VOID,
    // if (i >= m) leave the loop
    ...get(I), ...get(M), OP.i32GeS, OP.brIf, 1,
    // xoroshiro128+ (Blackman & Vigna 2018): out = s0 + s1; a = s1 ^ s0;
    // s0 = rotl(s0, 24) ^ a ^ (a << 16); s1 = rotl(a, 37)
    ...get(S0), ...get(S1), OP.i64Add, ...set(OUT),
    ...get(S1), ...get(S0), OP.i64Xor, ...set(A),
    ...get(S0), ...i64(24), OP.i64Rotl, ...get(A), OP.i64Xor, ...get(A), ...i64(16), OP.i64Shl, OP.i64Xor, ...set(S0),
    ...get(A), ...i64(37), OP.i64Rotl, ...set(S1),
    ...get(OUT), OP.i32WrapI64, ...set(LO),
    ...get(OUT), ...i64(32), OP.i64ShrU, OP.i32WrapI64, ...set(HI),
    // b = n − i; q1 = (lo >>> 16)·b, q2 = (hi & 0xffff)·(b − 1), q3 = (hi >>> 16)·(b − 2)
    ...get(N), ...get(I), OP.i32Sub, ...set(B),
    ...get(LO), ...i32(16), OP.i32ShrU, ...get(B), OP.i32Mul, ...set(Q[0]),
    ...get(HI), ...i32(0xffff), OP.i32And, ...get(B), ...i32(1), OP.i32Sub, OP.i32Mul, ...set(Q[1]),
    ...get(HI), ...i32(16), OP.i32ShrU, ...get(B), ...i32(2), OP.i32Sub, OP.i32Mul, ...set(Q[2]),
    // e_k = META[i + k]
    ...get(I), ...i32(2), OP.i32Shl, OP.localTee, J, ...load32(KERNEL_LAYOUT.meta), ...set(E[0]),
    ...get(J), ...load32(KERNEL_LAYOUT.meta + 4), ...set(E[1]),
    ...get(J), ...load32(KERNEL_LAYOUT.meta + 8), ...set(E[2]),
    // any of the three below its threshold: reject all three, next step
    ...lowMinusThreshold(0), ...lowMinusThreshold(1), OP.i32Or, ...lowMinusThreshold(2), OP.i32Or, ...i32(0), OP.i32LtS, OP.brIf, 0,
    ...pick(0),
    ...pick(1),
    ...pick(2),
    OP.br, 0,
    OP.end,
    OP.end,
    ...stateAddress, ...get(S0), OP.i64Store, 3, ...unsignedLeb(KERNEL_LAYOUT.state),
    ...stateAddress, ...get(S1), OP.i64Store, 3, ...unsignedLeb(KERNEL_LAYOUT.state + 8),
    OP.end,
  ];
}

// Tally locals: parameters labels, cells; i32 last, t, k, left, x0..x3, stride,
// labels2, labels3; f64 s0..s3, f.
const TL = { labels: 0, cells: 1, last: 2, t: 3, k: 4, left: 5, x: [6, 7, 8, 9], stride: 10, labels2: 11, labels3: 12, s: [13, 14, 15, 16], f: 17 };
const TALLY_I32_LOCALS = 11;
const TALLY_F64_LOCALS = 5;

const f64Weight = (offsetCells: number[]) => [...offsetCells, ...i32(3), OP.i32Shl, OP.f64Load, 3, ...unsignedLeb(KERNEL_LAYOUT.weights)];
const cellAt = (index: number[]) => [...index, ...i32(1), OP.i32Shl, ...load16(KERNEL_LAYOUT.cells)];
// s_p += x·x·w (x an i32 count), in the JavaScript tally's order: (x·x)·w.
const accumulate = (p: number, x: number, weightIndex: number[]) => [
  ...get(TL.s[p]),
  ...get(x), OP.f64ConvertI32S, ...get(x), OP.f64ConvertI32S, OP.f64Mul, ...f64Weight(weightIndex), OP.f64Mul,
  OP.f64Add, ...set(TL.s[p]),
];

// The JavaScript tally of permutation-sampler.ts, operation for operation,
// so both give the same Σ w x² to the last bit.
function tallyBody(): number[] {
  const k = get(TL.k);
  const plus = (local: number) => [...get(TL.k), ...get(local), OP.i32Add];
  return [
    ...get(TL.cells), ...get(TL.labels), OP.i32Sub, ...set(TL.last),
    ...get(TL.labels), ...i32(2), OP.i32Shl, ...set(TL.stride),
    ...get(TL.labels), ...i32(1), OP.i32Shl, ...set(TL.labels2),
    ...get(TL.labels2), ...get(TL.labels), OP.i32Add, ...set(TL.labels3),
    OP.block, VOID,
    OP.loop, VOID,
    ...get(TL.t), ...get(TL.labels), OP.i32GeS, OP.brIf, 1,
    ...get(TL.t), ...i32(2), OP.i32Shl, ...load32(KERNEL_LAYOUT.labelSize), ...set(TL.left),
    ...get(TL.t), ...set(TL.k),
    // four blocks at a time while k + 3·labels < last
    OP.block, VOID,
    OP.loop, VOID,
    ...plus(TL.labels3), ...get(TL.last), OP.i32GeS, OP.brIf, 1,
    ...cellAt(k), ...set(TL.x[0]),
    ...cellAt(plus(TL.labels)), ...set(TL.x[1]),
    ...cellAt(plus(TL.labels2)), ...set(TL.x[2]),
    ...cellAt(plus(TL.labels3)), ...set(TL.x[3]),
    ...accumulate(0, TL.x[0], k),
    ...accumulate(1, TL.x[1], plus(TL.labels)),
    ...accumulate(2, TL.x[2], plus(TL.labels2)),
    ...accumulate(3, TL.x[3], plus(TL.labels3)),
    ...get(TL.left), ...get(TL.x[0]), ...get(TL.x[1]), OP.i32Add, ...get(TL.x[2]), ...get(TL.x[3]), OP.i32Add, OP.i32Add, OP.i32Sub, ...set(TL.left),
    ...plus(TL.stride), ...set(TL.k),
    OP.br, 0,
    OP.end,
    OP.end,
    // the rest one block at a time while k < last
    OP.block, VOID,
    OP.loop, VOID,
    ...get(TL.k), ...get(TL.last), OP.i32GeS, OP.brIf, 1,
    ...cellAt(k), ...set(TL.x[0]),
    ...accumulate(0, TL.x[0], k),
    ...get(TL.left), ...get(TL.x[0]), OP.i32Sub, ...set(TL.left),
    ...plus(TL.labels), ...set(TL.k),
    OP.br, 0,
    OP.end,
    OP.end,
    // the last block: s1 += left·left·w[last + t]; LEFT[t] = left
    ...accumulate(1, TL.left, [...get(TL.last), ...get(TL.t), OP.i32Add]),
    ...get(TL.t), ...i32(1), OP.i32Shl, ...get(TL.left), ...store16(KERNEL_LAYOUT.left),
    ...get(TL.t), ...i32(1), OP.i32Add, ...set(TL.t),
    OP.br, 0,
    OP.end,
    OP.end,
    // clear the counts, the last block's extra positions included
    ...i32(KERNEL_LAYOUT.cells), ...i32(0), ...get(TL.cells), ...i32(1), OP.i32Shl, ...MEMORY_FILL,
    // s0 + s1 + (s2 + s3)
    ...get(TL.s[0]), ...get(TL.s[1]), OP.f64Add, ...get(TL.s[2]), ...get(TL.s[3]), OP.f64Add, OP.f64Add,
    OP.end,
  ];
}

/**
 * The WebAssembly module of the shuffle kernel, as bytes.
 *
 * Method: the binary format of the WebAssembly core specification (§5):
 * two function types, (n, m) → () and (labels, cells) → f64, the two
 * functions, one exported memory of exactly five 64 KiB pages, and the code
 * of shuffleBody and tallyBody above.
 *
 * Cost: 948 bytes, built once; building, compiling and instantiating take
 * about 2 ms at module load.
 *
 * @example
 * Array.from(shuffleKernelBytes().subarray(0, 4)); // [0, 97, 115, 109]  ("\0asm")
 */
export function shuffleKernelBytes(): Uint8Array<ArrayBuffer> {
  const shuffle = [...vector([[I32_LOCALS, I32], [I64_LOCALS, I64]]), ...shuffleBody()];
  const tally = [...vector([[TALLY_I32_LOCALS, I32], [TALLY_F64_LOCALS, F64]]), ...tallyBody()];
  return new Uint8Array([
    0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00,
    ...section(1, vector([
      [0x60, ...vector([[I32], [I32]]), ...vector([])],
      [0x60, ...vector([[I32], [I32]]), ...vector([[F64]])],
    ])),
    ...section(3, vector([[0], [1]])),
    ...section(5, vector([[0x01, KERNEL_LAYOUT.pages, KERNEL_LAYOUT.pages]])),
    ...section(7, vector([[...name("shuffle"), 0x00, 0], [...name("tally"), 0x00, 1], [...name("memory"), 0x02, 0]])),
    ...section(10, vector([
      [...unsignedLeb(shuffle.length), ...shuffle],
      [...unsignedLeb(tally.length), ...tally],
    ])),
  ]);
}

/**
 * The shuffle kernel, compiled and instantiated synchronously, or null where
 * WebAssembly is not available (then the sampler runs its JavaScript loop,
 * which draws the same tables).
 *
 * @example
 * createShuffleKernel()?.memory.buffer.byteLength; // 327680
 */
export function createShuffleKernel(): ShuffleKernel | null {
  if (typeof WebAssembly !== "object") return null;
  try {
    const instance = new WebAssembly.Instance(new WebAssembly.Module(shuffleKernelBytes()));
    const exports = instance.exports as {
      shuffle: (n: number, m: number) => void;
      tally: (labels: number, cells: number) => number;
      memory: WebAssembly.Memory;
    };
    return { memory: exports.memory, shuffle: exports.shuffle, tally: exports.tally };
  } catch {
    return null;
  }
}
