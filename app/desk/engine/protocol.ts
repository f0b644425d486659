// Messages between the page (DeskEngine) and the desk's AudioWorklet,
// validated on arrival with zod (the worklet trusts nothing it is sent).

import { z } from "zod";
import { chainSchema } from "../../../dsp/chain/schema.ts";
import type { DeskLayout } from "../../../dsp/live/desk-core.ts";

const frame = z.number().int().min(0);

export const toWorkletSchema = z.discriminatedUnion("type", [
  z.object({
    type: z.literal("load"),
    channels: z.number().int().min(1).max(2),
    audio: z.array(z.custom<Float32Array<ArrayBuffer>>((v) => v instanceof Float32Array, { error: "must be a Float32Array" })).min(1).max(2),
    audioStartFrame: frame,
    regionStartFrame: frame,
    regionEndFrame: frame,
    chain: chainSchema,
    playing: z.boolean().default(false),
    /** Match on or off from the first frame (on by default). */
    match: z.boolean().default(true),
  }),
  z.object({ type: z.literal("play") }),
  z.object({ type: z.literal("pause") }),
  z.object({ type: z.literal("seek"), songFrame: z.number().finite() }),
  z.object({ type: z.literal("chain"), chain: chainSchema }),
  z.object({ type: z.literal("push"), stageIndex: z.number().int().min(0), on: z.boolean() }),
  z.object({ type: z.literal("bypassAll"), on: z.boolean() }),
  z.object({ type: z.literal("match"), on: z.boolean() }),
  z.object({ type: z.literal("compare"), chain: chainSchema.nullable() }),
  z.object({ type: z.literal("listen"), which: z.enum(["current", "compare"]) }),
]);

export type ToWorklet = z.input<typeof toWorkletSchema>;
export type ToWorkletParsed = z.output<typeof toWorkletSchema>;

export type FromWorklet =
  | { type: "ready"; layout: DeskLayout; sampleRate: number }
  | { type: "layout"; layout: DeskLayout }
  | { type: "meters"; data: Float64Array }
  | { type: "error"; message: string };

/** Parses a message for the worklet; a readable error when it does not fit. */
export function parseToWorklet(data: unknown): { ok: true; message: ToWorkletParsed } | { ok: false; error: string } {
  const r = toWorkletSchema.safeParse(data);
  if (r.success) return { ok: true, message: r.data };
  return { ok: false, error: r.error.issues.map((i) => `${i.path.join(".") || "(message)"}: ${i.message}`).join("; ") };
}

/** The AudioWorkletProcessor's registered name. */
export const DESK_PROCESSOR = "tidemark-desk";
