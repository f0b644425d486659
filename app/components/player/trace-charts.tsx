// Gain-reduction traces of the two sources over the mix's time axis, one
// chart per stage (and band), gain reduction as a filled area hanging down
// from the zero line; short-term loudness as lines. Rows come from
// alignTraces (app/lib/compare/traces.ts); the player's position is drawn as
// a cursor on every chart. A mix has no gain reduction (nothing processed
// it): the legend says so and only its loudness line is drawn.
import { Area, CartesianGrid, ComposedChart, Line, ReferenceLine, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";
import type { AlignedTraces } from "../../lib/compare/traces.ts";
import { formatClock } from "./format.ts";

const A_COLOUR = "var(--color-accent)";
const B_COLOUR = "var(--color-ink)";

export type TraceChartsProps = {
  aligned: AlignedTraces;
  positionS?: number | null;
  labels: { a: string; b: string };
  /** False for a mix: nothing processed it, so it has a loudness line and no gain reduction. */
  processed?: { a: boolean; b: boolean };
  /** The player's loop, which the charts can zoom to; `onZoom(null)` shows the whole span again. */
  loop?: { startS: number; endS: number } | null;
  onZoom?: (region: { startS: number; endS: number } | null) => void;
};

export function TraceCharts({ aligned, positionS, labels, processed = { a: true, b: true }, loop = null, onZoom }: TraceChartsProps) {
  if (aligned.rows.length === 0 || aligned.panels.length === 0) {
    return <p className="text-sm text-ink-soft">No traces were stored for these renders.</p>;
  }
  const domain: [number, number] = [aligned.startS, aligned.endS];
  return (
    <div className="space-y-4" data-testid="trace-charts" data-zoomed={aligned.zoomed ? "true" : "false"} data-start-s={aligned.startS} data-end-s={aligned.endS}>
      {onZoom && (
        <p className="flex flex-wrap items-center gap-3 text-sm">
          <span className="num text-ink-soft">
            {aligned.zoomed ? "Zoomed to" : "Showing"} {formatClock(aligned.startS)} – {formatClock(aligned.endS)}
          </span>
          {loop && (
            <button type="button" className="btn-quiet" onClick={() => onZoom(loop)}>
              Zoom to the loop
            </button>
          )}
          {aligned.zoomed && (
            <button type="button" className="btn-quiet" onClick={() => onZoom(null)}>
              Show the whole span
            </button>
          )}
          {!loop && !aligned.zoomed && <span className="text-xs text-ink-soft">Drag across the waveform to loop a region, then zoom the traces to it.</span>}
        </p>
      )}
      <p className="text-xs text-ink-soft">
        <span className="mr-3 inline-block h-2 w-4 align-middle" style={{ background: A_COLOUR }} /> A · {labels.a}
        {!processed.a && <span data-testid="legend-a-unprocessed"> (no processing: loudness only)</span>}
        <span className="mr-3 ml-6 inline-block h-2 w-4 align-middle" style={{ background: B_COLOUR, opacity: 0.6 }} /> B · {labels.b}
        {!processed.b && <span data-testid="legend-b-unprocessed"> (no processing: loudness only)</span>}
        <span className="ml-6">Grid {aligned.gridMs} ms</span>
      </p>
      {aligned.panels.map((panel) => {
        const loudness = panel.kind === "shortTermLufs";
        return (
          <figure key={panel.id} className="card max-w-full min-w-0 overflow-hidden p-3" data-panel={panel.id}>
            <figcaption className="mb-1 text-sm font-medium text-ink">{panel.title}</figcaption>
            <div className="w-full max-w-full min-w-0 overflow-hidden" style={{ height: loudness ? 140 : 110 }}>
              <ResponsiveContainer width="100%" height="100%">
                <ComposedChart data={aligned.rows} margin={{ top: 6, right: 28, bottom: 0, left: 0 }}>
                  <CartesianGrid stroke="var(--color-rule)" strokeDasharray="2 4" vertical={false} />
                  <XAxis dataKey="timeS" type="number" domain={domain} tickFormatter={(s: number) => formatClock(s)} tick={{ fontFamily: "var(--font-mono)", fontSize: 11 }} />
                  <YAxis
                    // Gain reduction hangs down from 0 dB: the axis runs downwards.
                    reversed={!loudness}
                    domain={loudness ? [-40, 0] : [0, "auto"]}
                    allowDataOverflow={loudness}
                    // The unit is in the panel's title; bare numbers keep the ticks on one line.
                    width={40}
                    tickFormatter={(v: number) => (loudness ? `${v}` : v === 0 ? "0" : `−${Number(v.toFixed(1))}`)}
                    tick={{ fontFamily: "var(--font-mono)", fontSize: 11 }}
                  />
                  <Tooltip
                    labelFormatter={(s) => formatClock(Number(s))}
                    formatter={(value, name) => [typeof value === "number" ? `${loudness ? value.toFixed(1) : `−${value.toFixed(2)}`} ${loudness ? "LUFS" : "dB"}` : "—", String(name)]}
                    contentStyle={{ fontFamily: "var(--font-mono)", fontSize: 12 }}
                  />
                  {loudness ? (
                    <>
                      {panel.a && <Line dataKey={panel.a} name="A" stroke={A_COLOUR} dot={false} isAnimationActive={false} strokeWidth={1.5} connectNulls={false} />}
                      {panel.b && <Line dataKey={panel.b} name="B" stroke={B_COLOUR} dot={false} isAnimationActive={false} strokeWidth={1} strokeOpacity={0.7} connectNulls={false} />}
                    </>
                  ) : (
                    <>
                      {panel.a && <Area dataKey={panel.a} name="A" type="stepAfter" stroke={A_COLOUR} fill={A_COLOUR} fillOpacity={0.35} isAnimationActive={false} connectNulls={false} />}
                      {panel.b && <Area dataKey={panel.b} name="B" type="stepAfter" stroke={B_COLOUR} fill={B_COLOUR} fillOpacity={0.15} isAnimationActive={false} connectNulls={false} />}
                    </>
                  )}
                  {typeof positionS === "number" && <ReferenceLine x={positionS} stroke="var(--color-accent-deep)" />}
                </ComposedChart>
              </ResponsiveContainer>
            </div>
          </figure>
        );
      })}
    </div>
  );
}
