// Loads the `ebur128-wasm` dev dependency in plain Node, for tests and
// benchmarks only (second opinion; never used by the product). Its own entry
// imports the .wasm file as an ES module, which Node does not do, so we
// instantiate the binary ourselves and call its exports the way its
// generated glue does: copy float32 samples into wasm memory, call.

import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import { dirname, join } from "node:path";

interface Exports {
  memory: WebAssembly.Memory;
  __wbindgen_malloc(size: number): number;
  ebur128_integrated_mono(rate: number, ptr: number, len: number): number;
  ebur128_integrated_stereo(rate: number, lp: number, ll: number, rp: number, rl: number): number;
  ebur128_true_peak_mono(rate: number, ptr: number, len: number): number;
  ebur128_true_peak_stereo(rate: number, lp: number, ll: number, rp: number, rl: number): number;
}

let cached: Exports | null = null;

function load(): Exports {
  if (cached) return cached;
  const require = createRequire(import.meta.url);
  const pkgDir = dirname(require.resolve("ebur128-wasm/package.json"));
  const bytes = readFileSync(join(pkgDir, "ebur128_wasm_bg.wasm"));
  const fail = () => {
    throw new Error("ebur128-wasm panicked");
  };
  const imports = {
    "./ebur128_wasm_bg.js": {
      __wbg_new_693216e109162396: () => 0,
      __wbg_stack_0ddaca5d1abfb52f: () => {},
      __wbg_error_09919627ac0992f5: fail,
      __wbindgen_object_drop_ref: () => {},
    },
  };
  const instance = new WebAssembly.Instance(new WebAssembly.Module(bytes), imports);
  cached = instance.exports as unknown as Exports;
  return cached;
}

// The Rust side takes ownership of the buffers and frees them.
function pass(e: Exports, samples: Float32Array): [number, number] {
  const ptr = e.__wbindgen_malloc(samples.length * 4);
  new Float32Array(e.memory.buffer, ptr, samples.length).set(samples);
  return [ptr, samples.length];
}

/** Integrated loudness (LUFS) by ebur128-wasm. */
export function referenceIntegratedLufs(sampleRate: number, channels: Float32Array[]): number {
  const e = load();
  if (channels.length === 1) return e.ebur128_integrated_mono(sampleRate, ...pass(e, channels[0]));
  const [lp, ll] = pass(e, channels[0]);
  const [rp, rl] = pass(e, channels[1]);
  return e.ebur128_integrated_stereo(sampleRate, lp, ll, rp, rl);
}

/** True peak by ebur128-wasm, in dBTP. */
export function referenceTruePeakDbtp(sampleRate: number, channels: Float32Array[]): number {
  const e = load();
  if (channels.length === 1) return e.ebur128_true_peak_mono(sampleRate, ...pass(e, channels[0]));
  const [lp, ll] = pass(e, channels[0]);
  const [rp, rl] = pass(e, channels[1]);
  return e.ebur128_true_peak_stereo(sampleRate, lp, ll, rp, rl);
}
