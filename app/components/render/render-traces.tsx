// One render's gain reduction, one chart per stage with its bands as series,
// drawn as areas hanging down from the 0 dB line (the values are plotted as
// −GR), and the output's short-term loudness as a line; all on one time axis.
import { Area, AreaChart, CartesianGrid, Line, LineChart, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";

export type ChartTraces = {
  stepS: number;
  /** Seconds into the mix of the first point (a preview starts where its region does). */
  startS: number;
  stages: { index: number; type: string; names: string[]; points: number[][] }[];
  shortTermLufs: (number | null)[];
};

const SERIES_COLOURS = ["#0e5f6b", "#b3672b", "#5a4f9c", "#3f7d3a", "#a3321f", "#4a4d55"];
const STAGE_NAMES: Record<string, string> = { multiband: "Multiband dynamics", compress: "Compressor", limit: "Limiter", saturate: "Saturation", resonance: "Resonance taming (deepest cut)", tape: "Tape colour (curve compression at the peak)" };

// A chart keeps the width it last measured until its resize observer fires: its box
// never grows past its container, so a page narrowed meanwhile (a phone turned, a
// test's viewport) does not scroll sideways whatever the timing.
const CHART_BOX = "w-full max-w-full min-w-0 overflow-hidden";

const tick = { fontFamily: "var(--font-mono)", fontSize: 11 };
const timeLabel = (s: number) => `${s.toFixed(s < 10 ? 1 : 0)} s`;

export function RenderTraces({ traces }: { traces: ChartTraces }) {
  const length = traces.shortTermLufs.length || traces.stages[0]?.points[0]?.length || 0;
  const time = (i: number) => Math.round((traces.startS + i * traces.stepS) * 100) / 100;
  const loudness = traces.shortTermLufs.map((v, i) => ({ t: time(i), lufs: v }));
  return (
    <div className="min-w-0 max-w-full space-y-4" data-testid="render-traces">
      {traces.stages.map((stage) => {
        const rows = Array.from({ length }, (_, i) => {
          const row: Record<string, number> = { t: time(i) };
          stage.points.forEach((series, s) => {
            row[`s${s}`] = -(series[i] ?? 0);
          });
          return row;
        });
        return (
          <figure key={stage.index} className="card max-w-full min-w-0 overflow-hidden p-3" data-stage={stage.type}>
            <figcaption className="mb-1 text-sm font-medium">
              {STAGE_NAMES[stage.type] ?? stage.type} <span className="text-ink-faint">· stage {stage.index + 1} · gain reduction (dB)</span>
            </figcaption>
            <div className={CHART_BOX} style={{ height: 130 }}>
              <ResponsiveContainer width="100%" height="100%">
                <AreaChart data={rows} margin={{ top: 4, right: 20, bottom: 0, left: 0 }}>
                  <CartesianGrid stroke="var(--color-rule)" strokeDasharray="2 4" vertical={false} />
                  <XAxis dataKey="t" type="number" domain={["dataMin", "dataMax"]} tickFormatter={timeLabel} tick={tick} />
                  <YAxis
                    // At least 1 dB deep, so a stage that hardly acts still reads as "close to 0 dB".
                    domain={[(min: number) => Math.min(-1, Math.floor(min)), 0]}
                    allowDecimals={false}
                    width={40}
                    tick={tick}
                    tickFormatter={(v: number) => `${v}`.replace("-", "−")}
                  />
                  <Tooltip
                    labelFormatter={(t) => timeLabel(Number(t))}
                    formatter={(v, name) => [`${(-Number(v)).toFixed(2)} dB`, String(name)]}
                    contentStyle={{ fontFamily: "var(--font-mono)", fontSize: 12 }}
                  />
                  {stage.names.map((name, s) => (
                    <Area
                      key={name}
                      dataKey={`s${s}`}
                      name={name}
                      baseValue={0}
                      type="monotone"
                      stroke={SERIES_COLOURS[s % SERIES_COLOURS.length]}
                      fill={SERIES_COLOURS[s % SERIES_COLOURS.length]}
                      fillOpacity={0.25}
                      isAnimationActive={false}
                    />
                  ))}
                </AreaChart>
              </ResponsiveContainer>
            </div>
            {stage.names.length > 1 && (
              <p className="mt-1 flex flex-wrap gap-3 text-xs text-ink-soft">
                {stage.names.map((name, s) => (
                  <span key={name}>
                    <span className="mr-1 inline-block h-2 w-3 align-middle" style={{ background: SERIES_COLOURS[s % SERIES_COLOURS.length] }} />
                    {name}
                  </span>
                ))}
              </p>
            )}
          </figure>
        );
      })}
      <figure className="card max-w-full min-w-0 overflow-hidden p-3" data-stage="loudness">
        <figcaption className="mb-1 text-sm font-medium">Output short-term loudness (LUFS)</figcaption>
        <div className={CHART_BOX} style={{ height: 140 }}>
          <ResponsiveContainer width="100%" height="100%">
            <LineChart data={loudness} margin={{ top: 4, right: 20, bottom: 0, left: 0 }}>
              <CartesianGrid stroke="var(--color-rule)" strokeDasharray="2 4" vertical={false} />
              <XAxis dataKey="t" type="number" domain={["dataMin", "dataMax"]} tickFormatter={timeLabel} tick={tick} />
              <YAxis domain={[-40, 0]} allowDataOverflow width={40} tick={tick} tickFormatter={(v: number) => `${v}`.replace("-", "−")} />
              <Tooltip labelFormatter={(t) => timeLabel(Number(t))} formatter={(v) => [typeof v === "number" ? `${v.toFixed(1)} LUFS` : "—", "short-term"]} contentStyle={{ fontFamily: "var(--font-mono)", fontSize: 12 }} />
              <Line dataKey="lufs" stroke="var(--color-accent)" dot={false} isAnimationActive={false} strokeWidth={1.5} connectNulls={false} />
            </LineChart>
          </ResponsiveContainer>
        </div>
      </figure>
    </div>
  );
}
