// The desk's engine (app/desk/engine/desk-engine.ts) is a browser-only
// module: imported on demand when the engineer first presses Listen, never
// on the server. Its types are its published interface.
export type { DeskMeters, DeskRegion, DeskSource, DeskStageMeter } from "../../desk/engine/desk-engine.ts";
export type DeskEngineHandle = import("../../desk/engine/desk-engine.ts").DeskEngine;

export function loadDeskEngine() {
  return import("../../desk/engine/desk-engine.ts");
}
