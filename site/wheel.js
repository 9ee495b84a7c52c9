// The files of a wheel (a zip archive), read in JavaScript so they can be written into Pyodide's
// file system before Python starts (loadPyodide's fsInit hook): the core's modules and data
// files are then in site-packages from the first instruction, after an ordinary boot and after
// a boot from the memory snapshot alike, with no Python work to unpack them. Entries stored or
// deflated (the two methods wheels use) are supported; deflated ones are inflated with
// DecompressionStream("deflate-raw"). Used by worker.js, and by build_scripts/snapshot_check.mjs
// under Node.

const EOCD = 0x06054b50; // end of central directory record
const CENTRAL = 0x02014b50; // central directory file header
const LOCAL = 0x04034b50; // local file header

/**
 * Every file of a wheel, inflated.
 *
 * @param {ArrayBuffer|Uint8Array} archive  the wheel's bytes
 * @returns {Promise<{path: string, bytes: Uint8Array}[]>}  paths relative to site-packages
 */
export async function wheelFiles(archive) {
  const bytes = archive instanceof Uint8Array ? archive : new Uint8Array(archive);
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let end = -1;
  for (let i = bytes.length - 22; i >= Math.max(0, bytes.length - 22 - 0xffff); i--) {
    if (view.getUint32(i, true) === EOCD) {
      end = i;
      break;
    }
  }
  if (end < 0) throw new Error("the wheel is not a zip archive");
  const count = view.getUint16(end + 10, true);
  let at = view.getUint32(end + 16, true);
  const names = new TextDecoder();
  const entries = [];
  for (let n = 0; n < count; n++) {
    if (view.getUint32(at, true) !== CENTRAL) throw new Error("the wheel's zip directory is damaged");
    const method = view.getUint16(at + 10, true);
    const stored = view.getUint32(at + 20, true);
    const size = view.getUint32(at + 24, true);
    const nameLength = view.getUint16(at + 28, true);
    const local = view.getUint32(at + 42, true);
    const path = names.decode(bytes.subarray(at + 46, at + 46 + nameLength));
    at += 46 + nameLength + view.getUint16(at + 30, true) + view.getUint16(at + 32, true);
    if (path.endsWith("/")) continue; // a folder
    if (path.startsWith("/") || path.split("/").includes("..")) throw new Error(`unsafe path in the wheel: ${path}`);
    if (view.getUint32(local, true) !== LOCAL) throw new Error(`the wheel's entry ${path} is damaged`);
    const start = local + 30 + view.getUint16(local + 26, true) + view.getUint16(local + 28, true);
    entries.push({ path, method, size, data: bytes.subarray(start, start + stored) });
  }
  return Promise.all(
    entries.map(async ({ path, method, size, data }) => {
      let content;
      if (method === 0) content = data;
      else if (method === 8) {
        const stream = new Blob([data]).stream().pipeThrough(new DecompressionStream("deflate-raw"));
        content = new Uint8Array(await new Response(stream).arrayBuffer());
      } else throw new Error(`the wheel's entry ${path} uses compression method ${method}`);
      if (content.length !== size) throw new Error(`the wheel's entry ${path} has the wrong size`);
      return { path, bytes: content };
    }),
  );
}

/**
 * Write files into an Emscripten file system.
 *
 * @param {object} FS  pyodide.FS, or the FS handed to loadPyodide's fsInit hook
 * @param {string} folder  e.g. site-packages
 * @param {{path: string, bytes: Uint8Array}[]} files  from wheelFiles
 */
export function writeFiles(FS, folder, files) {
  for (const { path, bytes } of files) {
    const full = `${folder}/${path}`;
    FS.mkdirTree(full.slice(0, full.lastIndexOf("/")));
    FS.writeFile(full, bytes);
  }
}
