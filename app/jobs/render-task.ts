// Runs in a piscina thread: one analysis or one render through dsp/, with
// progress posted back on the MessagePort that came with the task. The
// thread may be terminated at any moment (cancel, shutdown); it writes only
// to the temporary paths it was given, never to storage.
// Static imports only: a dynamic import() of a .ts file inside a thread is not
// resolved by tsx's loader (found out the hard way).
import { analyzeFile } from "../../dsp/analysis.ts";
import { printRefusal } from "../../dsp/chain/print-check.ts";
import { formatChainErrors, parseChain } from "../../dsp/chain/schema.ts";
import { renderFile } from "../../dsp/render/render-file.ts";
import { probeWav } from "../../dsp/io/wav-reader.ts";
import { wavPeaks } from "../../dsp/render/waveform-peaks.ts";
import { toJsonValue } from "./json.ts";
import { writeFile } from "node:fs/promises";
import { taskSchema, type AnalyzeResult, type ProgressMessage, type RenderResult } from "./task-messages.ts";

/** At most this often a progress message; the process writes to the database less often still. */
const PROGRESS_INTERVAL_MS = 100;

function progressReporter(post: (message: ProgressMessage) => void) {
  let lastMs = 0;
  return (fraction: number) => {
    const now = Date.now();
    if (now - lastMs < PROGRESS_INTERVAL_MS && fraction < 1) return;
    lastMs = now;
    post({ type: "progress", fraction: Math.min(1, Math.max(0, Number.isFinite(fraction) ? fraction : 0)) });
  };
}

export default async function runTask(raw: unknown): Promise<AnalyzeResult | RenderResult> {
  const task = taskSchema.parse(raw);
  const onProgress = progressReporter((message) => task.port.postMessage(message));
  try {
    if (task.kind === "analyze") {
      const analysis = await analyzeFile(task.inputPath, { onProgress });
      return { kind: "analyze", analysis: toJsonValue(analysis) as Record<string, unknown> };
    }
    const parsed = parseChain(task.chain);
    if (!parsed.ok) throw new Error(`the chain is not valid: ${formatChainErrors(parsed.errors)}`);
    const chain = parsed.chain;
    // The form and the API refuse such a print; a revision queued another way still must not become a master.
    const refusal = task.preview ? null : printRefusal(chain);
    if (refusal) throw new Error(refusal);
    const result = await renderFile(task.inputPath, task.outputPath, chain, {
      region: task.region ?? undefined,
      preview: task.preview,
      targetLufs: task.targetLufs ?? undefined,
      targetGainDb: task.targetGainDb ?? undefined,
      onProgress,
    });
    await writeFile(task.tracesPath, JSON.stringify(toJsonValue(result.traces)));
    const format = await probeWav(task.outputPath);
    // Once, here in the thread: players draw the waveform from these without decoding the file.
    const peaks = await wavPeaks(task.outputPath);
    return {
      peaks,
      kind: "render",
      input: toJsonValue(result.input) as Record<string, unknown>,
      output: toJsonValue(result.output) as Record<string, unknown>,
      passes: result.passes,
      targetGainDb: result.targetGainDb ?? null,
      region: result.region ?? null,
      format: { sampleRateHz: format.sampleRate, channels: format.channels, bitDepth: format.bitDepth, sampleFormat: format.sampleFormat },
    };
  } finally {
    task.port.close();
  }
}
