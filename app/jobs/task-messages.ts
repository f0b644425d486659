// The messages between a worker process and its render threads, validated
// on both sides like form data: a thread trusts nothing it is sent, and the
// process trusts nothing a thread answers.
import { MessagePort } from "node:worker_threads";
import { z } from "zod";

const port = z.instanceof(MessagePort);

export const analyzeTaskSchema = z.object({
  kind: z.literal("analyze"),
  inputPath: z.string().min(1),
  port,
});

export const renderTaskSchema = z.object({
  kind: z.literal("render"),
  inputPath: z.string().min(1),
  outputPath: z.string().min(1),
  // The traces are written by the thread, so megabytes of them never cross back as a message.
  tracesPath: z.string().min(1),
  chain: z.unknown(),
  preview: z.boolean(),
  region: z.object({ startS: z.number().min(0), endS: z.number().positive() }).nullable(),
  targetLufs: z.number().min(-70).max(0).nullable(),
  /** The gain an earlier render found for this mix, chain revision and target (previews are the print); null: search. */
  targetGainDb: z.number().min(-36).max(36).nullable(),
  port,
});

export const taskSchema = z.discriminatedUnion("kind", [analyzeTaskSchema, renderTaskSchema]);
export type Task = z.infer<typeof taskSchema>;
export type AnalyzeTask = z.infer<typeof analyzeTaskSchema>;
export type RenderTask = z.infer<typeof renderTaskSchema>;

export const progressMessageSchema = z.object({ type: z.literal("progress"), fraction: z.number().min(0).max(1) });
export type ProgressMessage = z.infer<typeof progressMessageSchema>;

/** Analyses are the renderer's own JSON; only their being objects is checked here. */
const analysis = z.record(z.string(), z.unknown());

export const analyzeResultSchema = z.object({ kind: z.literal("analyze"), analysis });
export const renderResultSchema = z.object({
  kind: z.literal("render"),
  input: analysis,
  output: analysis,
  passes: z.number().int().min(1),
  /** Waveform peaks of the output (dsp/render/waveform-peaks.ts); absent from an older worker. */
  peaks: z
    .object({ columns: z.number().int().positive(), frames: z.number().int().nonnegative(), sampleRate: z.number().int().positive(), min: z.array(z.number().int()), max: z.array(z.number().int()) })
    .optional(),

  /** The loudness-target gain used (found or given); null without a target. */
  targetGainDb: z.number().nullable(),
  /** The region rendered: the one asked for, or the loudest stretch a preview found. */
  region: z.object({ startS: z.number(), endS: z.number() }).nullable(),
  format: z.object({
    sampleRateHz: z.number().int().positive(),
    channels: z.number().int().positive(),
    bitDepth: z.number().int().positive(),
    sampleFormat: z.enum(["int", "float"]),
  }),
});
export type AnalyzeResult = z.infer<typeof analyzeResultSchema>;
export type RenderResult = z.infer<typeof renderResultSchema>;
