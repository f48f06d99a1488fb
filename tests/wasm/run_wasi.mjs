// Runs one WebAssembly (wasm32-wasip1) program under Node's WASI, passing the
// remaining arguments to it, with the repository root preopened at its own
// path so tests that read files by absolute path (CARGO_MANIFEST_DIR) work.
// Used by `cargo xtask test` (stage "core in WebAssembly"). Exit code = the
// program's.
//   node tests/wasm/run_wasi.mjs PROGRAM.wasm [ARGS...]
import { readFile } from "node:fs/promises";
import { dirname, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import { argv, exit, emitWarning } from "node:process";

// Node 20 marks WASI experimental and prints a warning on import; keep the log clean.
process.emitWarning = (warning, ...rest) => {
  if (String(warning).includes("WASI")) return;
  emitWarning.call(process, warning, ...rest);
};
const { WASI } = await import("node:wasi");
const root = resolve(dirname(fileURLToPath(import.meta.url)), "..", "..");
const wasi = new WASI({
  version: "preview1",
  args: [argv[2], ...argv.slice(3)],
  env: { RUST_BACKTRACE: "0" },
  preopens: { [root]: root },
  returnOnExit: true,
});
const module = await WebAssembly.compile(await readFile(argv[2]));
const instance = await WebAssembly.instantiate(module, wasi.getImportObject());
exit(wasi.start(instance));
