/**
 * Matrix-vector product kernel for library search: out[r] = sum_j data[r, j] * q[j]
 * for every row r of a row-major float32 matrix.
 *
 * The search is memory-bound (each library value is read once per query), and a
 * plain JavaScript loop over a Float32Array runs several times slower than the
 * memory allows. So the loop is a tiny WebAssembly function using 128-bit SIMD
 * (four float32 lanes, two accumulators), written out below instruction by
 * instruction and assembled here; no package and no build step. The library
 * matrix lives in the kernel's WebAssembly.Memory, viewed as an ordinary
 * Float32Array. Where WebAssembly SIMD is not available the same product runs
 * in JavaScript (four rows per pass).
 *
 * Accumulation is in float32 over 8 lanes (about 400 terms each for a 3,100-point
 * row): for unit-norm rows the error is far below the 1e-5 the tests allow.
 */

// --- opcodes (WebAssembly core 2.0 and fixed-width SIMD) ---
const I32 = 0x7f;
const F32 = 0x7d;
const V128 = 0x7b;
const op = {
  block: [0x02, 0x40],
  loop: [0x03, 0x40],
  end: [0x0b],
  br: 0x0c,
  brIf: 0x0d,
  get: 0x20,
  set: 0x21,
  i32const: 0x41,
  i32geu: [0x4f],
  i32add: [0x6a],
  i32and: [0x71],
  i32shl: [0x74],
  f32add: [0x92],
  f32mul: [0x94],
  f32load: (offset: number) => [0x2a, 0x02, ...uleb(offset)],
  f32store: (offset: number) => [0x38, 0x02, ...uleb(offset)],
  v128load: (offset: number) => [0xfd, 0x00, 0x00, ...uleb(offset)],
  v128zero: [0xfd, 0x0c, ...new Array(16).fill(0)],
  f32x4extract: (lane: number) => [0xfd, 0x1f, lane],
  f32x4add: [0xfd, 0xe4, 0x01],
  f32x4mul: [0xfd, 0xe6, 0x01],
};

function uleb(n: number): number[] {
  const out: number[] = [];
  do {
    let b = n & 0x7f;
    n >>>= 7;
    if (n !== 0) b |= 0x80;
    out.push(b);
  } while (n !== 0);
  return out;
}

function sleb(n: number): number[] {
  const out: number[] = [];
  for (;;) {
    const b = n & 0x7f;
    n >>= 7;
    if ((n === 0 && (b & 0x40) === 0) || (n === -1 && (b & 0x40) !== 0)) {
      out.push(b);
      return out;
    }
    out.push(b | 0x80);
  }
}

const get = (i: number) => [op.get, i];
const set = (i: number) => [op.set, i];
const c = (v: number) => [op.i32const, ...sleb(v)];
const name = (s: string) => [...uleb(s.length), ...Array.from(s, (ch) => ch.charCodeAt(0))];
const section = (id: number, body: number[]) => [id, ...uleb(body.length), ...body];

// Locals: params 0 data, 1 q, 2 out (byte offsets), 3 rows, 4 width (floats);
// 5 r, 6 j (bytes), 7 rowPtr, 8 end8 (bytes), 9 rowBytes, 10 acc0, 11 acc1, 12 s.
const [DATA, Q, OUT, ROWS, WIDTH, R, J, ROW, END8, ROWB, ACC0, ACC1, S] = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12];

const body = [
  3,
  5,
  I32,
  2,
  V128,
  1,
  F32, // local declarations
  ...get(WIDTH),
  ...c(2),
  ...op.i32shl,
  ...set(ROWB), // rowBytes = width * 4
  ...get(WIDTH),
  ...c(-8),
  ...op.i32and,
  ...c(2),
  ...op.i32shl,
  ...set(END8), // end8 = (width & ~7) * 4
  ...get(DATA),
  ...set(ROW),
  ...op.block,
  ...op.loop, // for each row
  ...get(R),
  ...get(ROWS),
  ...op.i32geu,
  op.brIf,
  1,
  ...op.v128zero,
  ...set(ACC0),
  ...op.v128zero,
  ...set(ACC1),
  ...c(0),
  ...set(J),
  ...op.block,
  ...op.loop, // eight floats at a time
  ...get(J),
  ...get(END8),
  ...op.i32geu,
  op.brIf,
  1,
  ...get(ACC0),
  ...get(ROW),
  ...get(J),
  ...op.i32add,
  ...op.v128load(0),
  ...get(Q),
  ...get(J),
  ...op.i32add,
  ...op.v128load(0),
  ...op.f32x4mul,
  ...op.f32x4add,
  ...set(ACC0),
  ...get(ACC1),
  ...get(ROW),
  ...get(J),
  ...op.i32add,
  ...op.v128load(16),
  ...get(Q),
  ...get(J),
  ...op.i32add,
  ...op.v128load(16),
  ...op.f32x4mul,
  ...op.f32x4add,
  ...set(ACC1),
  ...get(J),
  ...c(32),
  ...op.i32add,
  ...set(J),
  op.br,
  0,
  ...op.end,
  ...op.end,
  ...get(ACC0),
  ...get(ACC1),
  ...op.f32x4add,
  ...set(ACC0), // horizontal sum
  ...get(ACC0),
  ...op.f32x4extract(0),
  ...get(ACC0),
  ...op.f32x4extract(1),
  ...op.f32add,
  ...get(ACC0),
  ...op.f32x4extract(2),
  ...op.f32add,
  ...get(ACC0),
  ...op.f32x4extract(3),
  ...op.f32add,
  ...set(S),
  ...op.block,
  ...op.loop, // remaining floats one by one
  ...get(J),
  ...get(ROWB),
  ...op.i32geu,
  op.brIf,
  1,
  ...get(S),
  ...get(ROW),
  ...get(J),
  ...op.i32add,
  ...op.f32load(0),
  ...get(Q),
  ...get(J),
  ...op.i32add,
  ...op.f32load(0),
  ...op.f32mul,
  ...op.f32add,
  ...set(S),
  ...get(J),
  ...c(4),
  ...op.i32add,
  ...set(J),
  op.br,
  0,
  ...op.end,
  ...op.end,
  ...get(OUT),
  ...get(R),
  ...c(2),
  ...op.i32shl,
  ...op.i32add,
  ...get(S),
  ...op.f32store(0), // out[r] = s
  ...get(ROW),
  ...get(ROWB),
  ...op.i32add,
  ...set(ROW),
  ...get(R),
  ...c(1),
  ...op.i32add,
  ...set(R),
  op.br,
  0,
  ...op.end,
  ...op.end,
  ...op.end,
];

const MODULE_BYTES = Uint8Array.from([
  0x00,
  0x61,
  0x73,
  0x6d,
  0x01,
  0x00,
  0x00,
  0x00,
  ...section(1, [1, 0x60, 5, I32, I32, I32, I32, I32, 0]), // type: (i32 x5) -> ()
  ...section(2, [1, ...name('env'), ...name('mem'), 0x02, 0x00, 0x01]), // import memory, min 1 page
  ...section(3, [1, 0]), // one function of type 0
  ...section(7, [1, ...name('dots'), 0x00, 0]), // export "dots"
  ...section(10, [1, ...uleb(body.length), ...body]),
]);

const PAGE = 65536;
let compiled: WebAssembly.Module | null | undefined;

function wasmModule(): WebAssembly.Module | null {
  if (compiled === undefined) {
    compiled =
      typeof WebAssembly === 'object' && WebAssembly.validate(MODULE_BYTES)
        ? new WebAssembly.Module(MODULE_BYTES)
        : null;
  }
  return compiled;
}

/** A float32 matrix (rows x width) with a query vector, and the product of both. */
export interface DotKernel {
  readonly rows: number;
  readonly width: number;
  /** The matrix, row-major; fill it before calling run. */
  readonly data: Float32Array;
  /** Set the query here before calling run. */
  readonly query: Float32Array;
  /** Computes every row's dot product with the query; the result array is reused by the next call. */
  run(): Float32Array;
  /** 'wasm-simd' or 'javascript'. */
  readonly engine: string;
}

function javascriptKernel(rows: number, width: number): DotKernel {
  const data = new Float32Array(rows * width);
  const query = new Float32Array(width);
  const out = new Float32Array(rows);
  return {
    rows,
    width,
    data,
    query,
    engine: 'javascript',
    run() {
      let r = 0;
      for (; r + 4 <= rows; r += 4) {
        const o0 = r * width;
        const o1 = o0 + width;
        const o2 = o1 + width;
        const o3 = o2 + width;
        let s0 = 0;
        let s1 = 0;
        let s2 = 0;
        let s3 = 0;
        for (let j = 0; j < width; j++) {
          const v = query[j];
          s0 += data[o0 + j] * v;
          s1 += data[o1 + j] * v;
          s2 += data[o2 + j] * v;
          s3 += data[o3 + j] * v;
        }
        out[r] = s0;
        out[r + 1] = s1;
        out[r + 2] = s2;
        out[r + 3] = s3;
      }
      for (; r < rows; r++) {
        let s = 0;
        const o = r * width;
        for (let j = 0; j < width; j++) s += data[o + j] * query[j];
        out[r] = s;
      }
      return out;
    },
  };
}

/** Allocates a kernel for a rows x width matrix (WebAssembly SIMD when available). */
export function createDotKernel(
  rows: number,
  width: number,
  options: { engine?: 'auto' | 'javascript' } = {},
): DotKernel {
  const mod = options.engine === 'javascript' ? null : wasmModule();
  const bytes = (rows * width + width + rows) * 4;
  if (!mod || bytes > 2 ** 31) return javascriptKernel(rows, width);
  const memory = new WebAssembly.Memory({ initial: Math.max(1, Math.ceil(bytes / PAGE)) });
  const instance = new WebAssembly.Instance(mod, { env: { mem: memory } });
  const dots = instance.exports.dots as (data: number, q: number, out: number, rows: number, width: number) => void;
  const dataOffset = 0;
  const queryOffset = rows * width * 4;
  const outOffset = queryOffset + width * 4;
  const data = new Float32Array(memory.buffer, dataOffset, rows * width);
  const query = new Float32Array(memory.buffer, queryOffset, width);
  const out = new Float32Array(memory.buffer, outOffset, rows);
  return {
    rows,
    width,
    data,
    query,
    engine: 'wasm-simd',
    run() {
      dots(dataOffset, queryOffset, outOffset, rows, width);
      return out;
    },
  };
}
