// What a chain may not do in a print, though a preview (or the live desk)
// may: a resonance stage listening to "removed" outputs only what it takes
// away, which is for hearing the stage, never a master. One rule, used by
// the render form, the API and the render worker.

/** The reason a print of this chain (parsed, or as stored in a revision) is refused, or null when it may be printed. */
export function printRefusal(chain: unknown): string | null {
  const stages = (chain as { stages?: unknown } | null | undefined)?.stages;
  if (!Array.isArray(stages)) return null;
  for (let i = 0; i < stages.length; i++) {
    const stage = stages[i] as { type?: unknown; bypass?: unknown; listen?: unknown } | null;
    if (stage?.type === "resonance" && stage.bypass !== true && stage.listen === "removed") {
      return `Stage ${i + 1} (resonance) listens to what it removes, not the music: a print cannot be made from it. Set its listen back to "output" in a new revision (a preview may keep "removed").`;
    }
  }
  return null;
}
