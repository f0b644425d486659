// A render's traces thinned for a chart: what the server reads
// (`render-traces.server.ts`) and the chart draws (`components/render/render-traces.tsx`).
export type ChartTraces = {
  stepS: number;
  /** Seconds into the mix of the first point (a preview starts where its region does). */
  startS: number;
  stages: { index: number; type: string; names: string[]; points: number[][] }[];
  shortTermLufs: (number | null)[];
};
