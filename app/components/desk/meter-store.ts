// The engine's meters (about 30 a second) kept outside React state, so only
// the few components that show them re-render, never the controls.
import { useSyncExternalStore } from "react";
import type { DeskMeters } from "./load-engine.ts";

/** Seconds of the last limiter's gain reduction kept for its history curve. */
export const LIMITER_HISTORY_S = 6;

export class MeterStore {
  private meters: DeskMeters | null = null;
  private readonly listeners = new Set<() => void>();
  /** The last limiter's gain reduction, oldest first, when the engine does not send its own history. */
  private history: number[] = [];
  private historyStage = -1;

  private frame: number | null = null;

  set(meters: DeskMeters | null, limiterStage: number): void {
    this.meters = meters;
    if (meters && limiterStage >= 0) {
      if (limiterStage !== this.historyStage) this.history = [];
      this.historyStage = limiterStage;
      const stage = meters.stages.find((s) => s.index === limiterStage);
      if (meters.playing) this.history = [...this.history.slice(-(LIMITER_HISTORY_S * 30 - 1)), stage?.grDb[0] ?? 0];
    }
    // Readers draw at most once per display frame, however fast messages come.
    if (meters === null || typeof requestAnimationFrame === "undefined") return this.notify();
    if (this.frame === null) this.frame = requestAnimationFrame(() => this.notify());
  }

  private notify(): void {
    if (this.frame !== null && typeof cancelAnimationFrame !== "undefined") cancelAnimationFrame(this.frame);
    this.frame = null;
    for (const listener of this.listeners) listener();
  }

  get = (): DeskMeters | null => this.meters;
  limiterHistory = (): number[] => this.meters?.limiterHistoryDb ?? this.history;

  subscribe = (listener: () => void): (() => void) => {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  };
}

export function useMeters(store: MeterStore): DeskMeters | null {
  return useSyncExternalStore(store.subscribe, store.get, () => null);
}
