// A tiny trend picture for the deviation board: the primary method's measured points joined by a line,
// against the expected course (dashed). Plain SVG, no chart library.
import type { Sparkline as SparkData } from "@/lib/followup/trend";
import { METHOD_LABELS } from "@/lib/validation/episodes";

export function Sparkline({ data, width = 120, height = 36 }: { data: SparkData | null; width?: number; height?: number }) {
  if (!data || data.points.length === 0) return <span className="text-xs text-ink-soft">no measured film</span>;
  const all = [...data.points, ...data.expected];
  const minX = Math.min(...all.map((p) => p[0]));
  const maxX = Math.max(...all.map((p) => p[0]), minX + 1);
  const maxY = Math.max(10, ...all.map((p) => p[1]));
  const pad = 3;
  const x = (d: number) => pad + ((d - minX) / (maxX - minX)) * (width - 2 * pad);
  const y = (v: number) => height - pad - (v / maxY) * (height - 2 * pad);
  const path = (pts: [number, number][]) => pts.map((p, i) => `${i === 0 ? "M" : "L"}${x(p[0]).toFixed(1)},${y(p[1]).toFixed(1)}`).join(" ");
  const last = data.points[data.points.length - 1];
  const label = `${METHOD_LABELS[data.method]} %: ${data.points.map((p) => `${p[1].toFixed(0)} on day ${p[0].toFixed(0)}`).join(", ")}; dashed line = expected course`;
  return (
    <svg width={width} height={height} viewBox={`0 0 ${width} ${height}`} role="img" aria-label={label} className="overflow-visible">
      <title>{label}</title>
      {data.expected.length > 1 ? <path d={path(data.expected)} fill="none" stroke="#4f5860" strokeWidth={1} strokeDasharray="3 2" /> : null}
      <path d={path(data.points)} fill="none" stroke="#15565a" strokeWidth={1.8} />
      {data.points.map((p, i) => (
        <circle key={i} cx={x(p[0])} cy={y(p[1])} r={i === data.points.length - 1 ? 2.8 : 1.8} fill="#15565a" />
      ))}
      {last ? <text x={Math.min(x(last[0]) + 4, width - 2)} y={Math.max(y(last[1]) - 3, 8)} fontSize={9} fill="#1f2428" textAnchor={x(last[0]) > width - 24 ? "end" : "start"}>{last[1].toFixed(0)}</text> : null}
    </svg>
  );
}
