// `tidemark render IN.wav --chain CHAIN.json --out OUT.wav [--traces TRACES.json]
//  [--region START:END] [--target LUFS] [--preview]`
// Prints { input, output, passes, … } as JSON on stdout (short-term curves
// go to the traces file only), progress on stderr when it is a terminal.
// Exit codes (as dsp/cli/main.ts): 0 done, 1 usage, 2 bad chain or input
// (message on stderr); anything unexpected is thrown to the dispatcher.

import { readFile, writeFile } from "node:fs/promises";
import { pathToFileURL } from "node:url";
import { formatChainErrors, parseChain } from "../chain/schema.ts";
import { WavFormatError } from "../io/wav-reader.ts";
import { renderFile, RenderInputError, type RenderAnalysis, type RenderOptions } from "../render/render-file.ts";

export const RENDER_USAGE =
  "usage: tidemark render IN.wav --chain CHAIN.json --out OUT.wav [--traces TRACES.json] [--region START:END] [--target LUFS] [--preview]";

class UsageError extends Error {}

interface RenderArgs {
  input: string;
  chainPath: string;
  out: string;
  traces?: string;
  region?: { startS: number; endS: number };
  targetLufs?: number;
  preview: boolean;
}

function parseArgs(argv: string[]): RenderArgs {
  const positional: string[] = [];
  const flags: Record<string, string> = {};
  let preview = false;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a === "--preview") preview = true;
    else if (a.startsWith("--")) {
      const [name, inline] = a.slice(2).split("=", 2);
      const value = inline ?? argv[++i];
      if (!["chain", "out", "traces", "region", "target"].includes(name)) throw new UsageError(`unknown option --${name}`);
      if (value === undefined) throw new UsageError(`--${name} needs a value`);
      flags[name] = value;
    } else positional.push(a);
  }
  if (positional.length !== 1) throw new UsageError("give exactly one input file");
  if (!flags.chain) throw new UsageError("--chain is required");
  if (!flags.out) throw new UsageError("--out is required");
  const args: RenderArgs = { input: positional[0], chainPath: flags.chain, out: flags.out, traces: flags.traces, preview };
  if (flags.region !== undefined) {
    const m = /^(\d+(?:\.\d+)?):(\d+(?:\.\d+)?)$/.exec(flags.region);
    if (!m || !(Number(m[2]) > Number(m[1]))) throw new UsageError(`--region must be START:END in seconds with START < END, got ${flags.region}`);
    args.region = { startS: Number(m[1]), endS: Number(m[2]) };
  }
  if (flags.target !== undefined) {
    const t = Number(flags.target);
    if (!Number.isFinite(t) || t < -40 || t > -5) throw new UsageError(`--target must be a loudness from -40 to -5 LUFS, got ${flags.target}`);
    args.targetLufs = t;
  }
  return args;
}

/** JSON has no -Infinity/NaN: silent or unmeasured values become null. */
function printable(a: RenderAnalysis): Record<string, unknown> {
  const { shortTermLufs: _curve, ...rest } = a;
  return Object.fromEntries(Object.entries(rest).map(([k, v]) => [k, typeof v === "number" && !Number.isFinite(v) ? null : v]));
}

export async function runRender(argv: string[]): Promise<number> {
  if (argv.includes("--help") || argv.includes("-h")) {
    process.stdout.write(`${RENDER_USAGE}\n`);
    return 0;
  }
  let args: RenderArgs;
  try {
    args = parseArgs(argv);
  } catch (err) {
    if (err instanceof UsageError) {
      process.stderr.write(`tidemark render: ${err.message}\n${RENDER_USAGE}\n`);
      return 1;
    }
    throw err;
  }
  let json: unknown;
  try {
    json = JSON.parse(await readFile(args.chainPath, "utf8"));
  } catch (err) {
    process.stderr.write(`tidemark render: cannot read chain ${args.chainPath}: ${(err as Error).message}\n`);
    return 2;
  }
  const parsed = parseChain(json);
  if (!parsed.ok) {
    process.stderr.write(`tidemark render: bad chain ${args.chainPath}:\n${formatChainErrors(parsed.errors).replace(/^/gm, "  ")}\n`);
    return 2;
  }
  const tty = process.stderr.isTTY;
  const options: RenderOptions = { region: args.region, preview: args.preview, targetLufs: args.targetLufs };
  if (tty) options.onProgress = (f) => process.stderr.write(`\rrendering ${(f * 100).toFixed(0).padStart(3)}%`);
  try {
    const result = await renderFile(args.input, args.out, parsed.chain, options);
    if (tty) process.stderr.write("\n");
    if (args.traces) await writeFile(args.traces, JSON.stringify(result.traces));
    const report = {
      output: printable(result.output),
      input: printable(result.input),
      passes: result.passes,
      latencyFrames: result.latencyFrames,
      ...(result.region ? { region: result.region } : {}),
      ...(result.targetGainDb !== undefined ? { targetGainDb: result.targetGainDb } : {}),
    };
    process.stdout.write(`${JSON.stringify(report, null, 2)}\n`);
    return 0;
  } catch (err) {
    if (tty) process.stderr.write("\n");
    const code = (err as NodeJS.ErrnoException).code;
    if (err instanceof WavFormatError || err instanceof RenderInputError || err instanceof RangeError || code === "ENOENT" || code === "EACCES") {
      process.stderr.write(`tidemark render: ${args.input}: ${(err as Error).message}\n`);
      return 2;
    }
    throw err;
  }
}

// Runnable on its own too: `tsx dsp/cli/render.ts …`.
if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  runRender(process.argv.slice(2)).then(
    (code) => process.exit(code),
    (err) => {
      process.stderr.write(`tidemark render: ${(err as Error).stack ?? err}\n`);
      process.exit(1);
    },
  );
}
