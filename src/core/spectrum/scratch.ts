/**
 * Working arrays kept from one call to the next. The band stages of one photo allocate some 25 MB of typed arrays that
 * live for a few milliseconds each; V8 counts the bytes of array buffers towards the old generation's limit, so in a
 * process that analyses photo after photo (the server, `watch`, a batch, the benchmark) every photo set off a full
 * mark-compact (measured: one to three per photo, 3–40 ms each on the project's 2-core machine; with 10 MB more of
 * buffers held during a run, one more per photo), and each fresh buffer costs its pages' first-touch faults again.
 *
 * A Scratch hands out zero-filled views of grow-only buffers, one buffer per named slot: the same memory every time
 * (`zeroed: false` skips the fill where the caller writes every element before it reads any: a pass over the memory
 * less, ~1 ms a photo over the coarse planes and samples).
 * Rules for the code that takes them: a view is valid until the next take of the same slot, so a slot belongs to one
 * place in the code, its view never leaves the synchronous call that took it (no await in between, not returned to a
 * caller that keeps it), and a function holding a view calls nothing that takes the same slot.
 */
type TypedArrayOf<T> = T extends Float32ArrayConstructor
  ? Float32Array
  : T extends Float64ArrayConstructor
    ? Float64Array
    : T extends Uint8ArrayConstructor
      ? Uint8Array
      : T extends Int32ArrayConstructor
        ? Int32Array
        : never;

type Constructor = Float32ArrayConstructor | Float64ArrayConstructor | Uint8ArrayConstructor | Int32ArrayConstructor;

/**
 * Largest buffer a slot keeps (bytes). A slot would otherwise hold on to the largest array any photo ever needed (a
 * band 8000 px long and 500 px high samples three planes of 22 MB); one beyond this is handed out new and not kept, so
 * a long-running server pins little more than ordinary photos need. The 12-MP bench photo's largest is 1.5 MB (the
 * detail layer's prefix sums).
 */
export const MAX_KEPT_BYTES = 8 * 1024 * 1024;

export class Scratch {
  readonly #buffers = new Map<string, Float32Array | Float64Array | Uint8Array | Int32Array>();

  /**
   * A view of `length` elements of slot `slot`, zero-filled unless `zeroed` is false (then it holds what the last
   * user left); its buffer grows (by ¼ more than asked) when too short.
   */
  take<C extends Constructor>(slot: string, type: C, length: number, zeroed = true): TypedArrayOf<C> {
    if (length * type.BYTES_PER_ELEMENT > MAX_KEPT_BYTES) return new type(length) as TypedArrayOf<C>;
    let buffer = this.#buffers.get(slot);
    if (buffer === undefined || buffer.length < length || buffer.constructor !== type) {
      buffer = new type(Math.ceil(length * 1.25));
      this.#buffers.set(slot, buffer);
      return buffer.subarray(0, length) as TypedArrayOf<C>;
    }
    const view = buffer.subarray(0, length);
    if (zeroed) view.fill(0);
    return view as TypedArrayOf<C>;
  }
}

/** `scratch.take(slot, type, length, zeroed)`, or a new array when there is no scratch. */
export function takeOrNew<C extends Constructor>(scratch: Scratch | undefined, slot: string, type: C, length: number, zeroed = true): TypedArrayOf<C> {
  return scratch ? scratch.take(slot, type, length, zeroed) : (new type(length) as TypedArrayOf<C>);
}
