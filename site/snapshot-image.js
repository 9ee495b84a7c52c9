// The Python memory snapshot as the build stores it (build_scripts/build.py pack_image): the
// heap without its all-zero pages, about half of them. Little-endian u32 fields: "ASNP",
// version 1, page size, heap size, number of runs, then per run (first page, page count), then
// the pages of every run in order. Used by worker.js, and by build_scripts/snapshot_check.mjs
// under Node.

const MAGIC = 0x504e5341; // "ASNP"

/**
 * The heap back from its packed image.
 *
 * @param {Uint8Array} image  the packed bytes (inflated already if the file was gzipped)
 * @returns {Uint8Array}  the heap, zero pages restored
 */
export function expandImage(image) {
  const view = new DataView(image.buffer, image.byteOffset, image.byteLength);
  if (image.length < 20 || view.getUint32(0, true) !== MAGIC) throw new Error("not a packed snapshot image");
  const version = view.getUint32(4, true);
  if (version !== 1) throw new Error(`packed snapshot image version ${version}`);
  const page = view.getUint32(8, true);
  const size = view.getUint32(12, true);
  const runs = view.getUint32(16, true);
  const heap = new Uint8Array(size);
  let at = 20 + 8 * runs;
  for (let r = 0; r < runs; r++) {
    const first = view.getUint32(20 + 8 * r, true);
    const count = view.getUint32(24 + 8 * r, true);
    const start = first * page;
    const end = Math.min(size, (first + count) * page);
    if (end < start || at + (end - start) > image.length) throw new Error("packed snapshot image is cut short");
    heap.set(image.subarray(at, at + (end - start)), start);
    at += end - start;
  }
  if (at !== image.length) throw new Error("packed snapshot image has trailing bytes");
  return heap;
}

/**
 * Grow a just-instantiated Pyodide runtime's memory so that a snapshot's heap fits: the memory
 * starts at the size the wasm declares, and Pyodide copies the heap into it without growing it
 * (a build that keeps answers in the image can outgrow that size). Call before Pyodide looks at
 * the memory (worker.js and build_scripts/snapshot_check.mjs wrap WebAssembly's instantiation).
 *
 * @param {WebAssembly.Instance} instance  the runtime, just instantiated
 * @param {number} heapBytes  the snapshot's size [bytes]; 0 for an ordinary boot
 * @returns {number}  pages added
 */
export function makeRoom(instance, heapBytes) {
  const memory = instance.exports.memory;
  const missing = Math.ceil(heapBytes / 65536) - memory.buffer.byteLength / 65536;
  if (missing > 0) memory.grow(missing);
  return Math.max(missing, 0);
}
