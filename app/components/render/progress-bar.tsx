// A render's state and progress, as a bar with its percentage.
import { STATE_LABEL } from "./format.ts";

export function RenderProgress({ state, progress }: { state: string; progress: number }) {
  const percent = Math.round(progress * 100);
  const active = state === "queued" || state === "running";
  return (
    <div className="min-w-32">
      <div className="flex justify-between text-sm">
        <span className={state === "failed" ? "text-danger" : ""}>{STATE_LABEL[state] ?? state}</span>
        {active && <span className="num">{percent} %</span>}
      </div>
      {active && <progress className="h-2 w-full accent-accent" max={100} value={percent} aria-label={`Render progress ${percent} %`} />}
    </div>
  );
}
