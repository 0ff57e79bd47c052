"use client";

import {
  CartesianGrid,
  ComposedChart,
  Line,
  ReferenceLine,
  ResponsiveContainer,
  Scatter,
  Tooltip,
  XAxis,
  YAxis,
} from "recharts";
import type { ValveHistory } from "@/lib/check/history";

/** One valve's gap over the odometer, its fitted line, and the gap at which it reaches the band's lower edge. */
export default function DriftChart({ h, unit }: { h: ValveHistory; unit: string }) {
  const pts = h.points.map((p) => ({ x: p.odometer, gap: p.gap }));
  // a line is drawn only where the checks hold a trend (driftProjection's verdict), so the picture
  // says no more than the words under it
  const trend = h.drift.verdict === "closing" || h.drift.verdict === "opening" || h.drift.verdict === "steady";
  const slope = trend ? h.drift.slopePerThousandKm : null;
  const limitGap = h.currentShim != null ? h.lowerLimit + h.currentShim : null;
  const xs = pts.map((p) => p.x);
  const x0 = Math.min(...xs);
  const xEnd = Math.max(
    ...xs,
    h.drift.verdict === "closing" &&
      h.drift.limitAtOdometer != null &&
      h.drift.limitAtOdometer < x0 + 4 * (Math.max(...xs) - x0 + 1)
      ? h.drift.limitAtOdometer
      : -Infinity,
  );
  // the least-squares line through the mean point
  const mx = xs.reduce((a, b) => a + b, 0) / xs.length;
  const my = pts.reduce((a, p) => a + p.gap, 0) / pts.length;
  const fit = slope == null ? [] : [x0, xEnd].map((x) => ({ x, fit: my + (slope / 1000) * (x - mx) }));
  const ys = [...pts.map((p) => p.gap), ...(limitGap != null ? [limitGap] : []), ...fit.map((f) => f.fit)];
  const pad = 0.02;
  return (
    <div className="h-64 w-full" role="img" aria-label={`Gap of ${h.valveId} over the odometer`}>
      <ResponsiveContainer width="100%" height="100%">
        <ComposedChart margin={{ top: 8, right: 12, bottom: 8, left: 4 }}>
          <CartesianGrid stroke="var(--line)" strokeDasharray="3 3" />
          <XAxis
            type="number"
            dataKey="x"
            domain={["dataMin", "dataMax"]}
            stroke="var(--ink-soft)"
            tickFormatter={(v: number) => `${Math.round(v / 1000)}k`}
            label={{
              value: `odometer, thousand ${unit}`,
              position: "insideBottom",
              offset: -4,
              fill: "var(--ink-soft)",
            }}
            height={44}
          />
          <YAxis
            type="number"
            domain={[Math.min(...ys) - pad, Math.max(...ys) + pad]}
            stroke="var(--ink-soft)"
            tickFormatter={(v: number) => v.toFixed(2)}
            width={56}
            label={{ value: "gap, mm", angle: -90, position: "insideLeft", fill: "var(--ink-soft)" }}
          />
          <Tooltip
            formatter={(v) => (typeof v === "number" ? `${v.toFixed(3)} mm` : String(v))}
            labelFormatter={(v) => `${Number(v).toLocaleString("en")} ${unit}`}
          />
          {limitGap != null && (
            <ReferenceLine
              y={limitGap}
              stroke="var(--tight)"
              strokeDasharray="6 4"
              label={{ value: "lower edge with this shim", fill: "var(--tight)", position: "insideBottomLeft" }}
            />
          )}
          {fit.length > 0 && (
            <Line
              data={fit}
              dataKey="fit"
              stroke="var(--accent)"
              dot={false}
              strokeWidth={2}
              isAnimationActive={false}
              name="trend"
            />
          )}
          <Scatter data={pts} dataKey="gap" fill="var(--ink)" name="gap (shim + clearance)" isAnimationActive={false} />
        </ComposedChart>
      </ResponsiveContainer>
    </div>
  );
}
