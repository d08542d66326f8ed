"use client";
// The resorption chart: measured points per method (the episode's primary method emphasised and joined),
// the expected course with its band, the predicted resolution, today, and events on the time axis
// (days since the first film). Hover a point for the film's thumbnail and figures; click opens the film desk.
import { useRouter } from "next/navigation";
import { useState } from "react";
import { Area, CartesianGrid, ComposedChart, Line, ReferenceLine, ResponsiveContainer, Scatter, XAxis, YAxis } from "recharts";
import type { TrendData, TrendPoint } from "@/lib/followup/trend";
import { formatDate } from "@/lib/format";
import { METHOD_LABELS } from "@/lib/validation/episodes";

type Method = TrendData["primaryMethod"];
const COLOURS: Record<Method, string> = { collins: "#15565a", light: "#8a4b00", rhea: "#2d6a2f" };
const EVENT_SHORT: Record<string, string> = {
  aspiration: "Aspiration",
  valve: "Valve",
  surgery: "Surgery",
  procedure: "Procedure",
  "drain-in": "Drain in",
  "drain-out": "Drain out",
  "oxygen-on": "O₂ on",
  "oxygen-off": "O₂ off",
};

interface Hover { point: TrendPoint; method: Method; x: number; y: number }
interface DotProps { cx?: number; cy?: number; payload?: TrendPoint }

const fmt = (v: number | null | undefined) => (v === null || v === undefined ? "—" : `${(Math.round(v * 10) / 10).toString()} %`);

export function TrendChart({ data }: { data: TrendData }) {
  const router = useRouter();
  const [hover, setHover] = useState<Hover | null>(null);
  const primary = data.primaryMethod;
  const methods: Method[] = [primary, ...(["collins", "light", "rhea"] as const).filter((m) => m !== primary)];
  const filmById = new Map(data.films.map((f) => [f.filmId, f]));
  const days = [0, data.nowDay, ...data.films.map((f) => f.day), ...data.band.map((b) => b.day), ...data.events.map((e) => e.day)];
  const xMin = Math.floor(Math.min(...days));
  const xMax = Math.ceil(Math.max(...days)) + 1;
  const yMax = Math.min(100, Math.max(20, ...methods.flatMap((m) => data.series[m].map((p) => p.percent)), ...data.band.map((b) => b.upper)) + 5);
  const yTop = Math.ceil(yMax / 10) * 10;
  const bandData = data.band.map((b) => ({ day: b.day, expected: b.expected, range: [b.lower, b.upper] as [number, number] }));

  const dot = (method: Method) =>
    function Dot(props: unknown) {
      const { cx, cy, payload } = props as DotProps;
      if (cx === undefined || cy === undefined || !payload) return <g />;
      const isPrimary = method === primary;
      const enter = () => setHover({ point: payload, method, x: cx, y: cy });
      return (
        <g
          role="link"
          tabIndex={0}
          aria-label={`${METHOD_LABELS[method]} ${fmt(payload.percent)} on day ${payload.day.toFixed(1)}: open the film`}
          style={{ cursor: "pointer" }}
          onMouseEnter={enter}
          onFocus={enter}
          onMouseLeave={() => setHover(null)}
          onBlur={() => setHover(null)}
          onClick={() => router.push(`/films/${payload.filmId}`)}
          onKeyDown={(e) => {
            if (e.key === "Enter" || e.key === " ") router.push(`/films/${payload.filmId}`);
          }}
          data-film-id={payload.filmId}
          data-method={method}
        >
          {isPrimary ? (
            <circle cx={cx} cy={cy} r={6} fill={COLOURS[method]} stroke="#fff" strokeWidth={1.5} />
          ) : (
            <circle cx={cx} cy={cy} r={4} fill="#fff" stroke={COLOURS[method]} strokeWidth={1.5} />
          )}
        </g>
      );
    };

  const hoveredFilm = hover ? filmById.get(hover.point.filmId) : undefined;

  return (
    <div>
      <div className="relative h-80 w-full" data-testid="resorption-chart">
        <ResponsiveContainer width="100%" height="100%">
          <ComposedChart margin={{ top: 28, right: 24, bottom: 24, left: 4 }}>
            <CartesianGrid stroke="#e7e2d7" />
            <XAxis
              type="number"
              dataKey="day"
              domain={[xMin, xMax]}
              allowDecimals={false}
              tickCount={Math.min(12, xMax - xMin + 1)}
              label={{ value: "Days since the first film", position: "insideBottom", offset: -12, fill: "#4f5860", fontSize: 12 }}
              tick={{ fontSize: 12, fill: "#4f5860" }}
            />
            <YAxis
              type="number"
              domain={[0, yTop]}
              ticks={Array.from({ length: yTop / 10 + 1 }, (_, i) => i * 10)}
              tick={{ fontSize: 12, fill: "#4f5860" }}
              label={{ value: "% of hemithorax", angle: -90, position: "insideLeft", offset: 14, fill: "#4f5860", fontSize: 12 }}
            />
            {bandData.length > 0 ? (
              <Area data={bandData} dataKey="range" type="linear" stroke="none" fill="#cfe6e6" fillOpacity={0.8} dot={false} activeDot={false} isAnimationActive={false} name="Band" />
            ) : null}
            {bandData.length > 0 ? (
              <Line data={bandData} dataKey="expected" type="linear" stroke="#4f5860" strokeDasharray="6 4" strokeWidth={1.5} dot={false} activeDot={false} isAnimationActive={false} name="Expected" />
            ) : null}
            <Line data={data.series[primary]} dataKey="percent" type="linear" stroke={COLOURS[primary]} strokeWidth={2.5} dot={false} activeDot={false} isAnimationActive={false} name={METHOD_LABELS[primary]} />
            {methods
              .slice()
              .reverse()
              .map((m) => (
                <Scatter key={m} data={data.series[m]} dataKey="percent" name={METHOD_LABELS[m]} isAnimationActive={false} shape={dot(m)} />
              ))}
            {data.events.map((e, i) => (
              <ReferenceLine
                key={`${e.kind}-${i}`}
                x={e.day}
                stroke="#8a4b00"
                strokeDasharray="2 3"
                label={{ value: EVENT_SHORT[e.kind] ?? e.kind, position: "top", fill: "#8a4b00", fontSize: 11, offset: 4 + (i % 2) * 12 }}
              />
            ))}
            {data.prediction ? (
              <ReferenceLine x={data.prediction.resolutionDay} stroke="#15565a" strokeWidth={1.5} label={{ value: `Predicted resolution ${formatDate(data.prediction.resolutionDate)}`, position: "insideTopRight", fill: "#0c3336", fontSize: 11 }} />
            ) : null}
            <ReferenceLine x={data.nowDay} stroke="#a3261b" strokeDasharray="4 2" label={{ value: "Today", position: "insideBottomRight", fill: "#a3261b", fontSize: 11 }} />
          </ComposedChart>
        </ResponsiveContainer>
        {hover ? (
          <div
            className="pointer-events-none absolute z-10 w-56 rounded-md border border-line bg-card p-2 text-xs shadow-lg"
            style={{ left: Math.max(0, hover.x + 12), top: Math.max(0, hover.y - 40) }}
            role="status"
          >
            <img src={`/api/films/${hover.point.filmId}/image?variant=thumb`} alt="" className="mb-1 h-28 w-full rounded bg-desk object-contain" />
            <div className="font-bold">Day {hover.point.day.toFixed(1)} · {formatDate(hover.point.takenAt)}</div>
            <div>{hover.point.position ?? "position not recorded"} {hover.point.projection ?? ""}{hoveredFilm?.signedOff ? " · signed off" : ""}</div>
            <div className="figures">
              Collins {fmt(hoveredFilm?.collins)} · Light {fmt(hoveredFilm?.light)} · Rhea {fmt(hoveredFilm?.rhea)}
            </div>
            {hoveredFilm?.hilumCm !== null && hoveredFilm?.hilumCm !== undefined ? <div className="figures">Hilum {hoveredFilm.hilumCm.toFixed(1)} cm{hoveredFilm.apexCm !== null ? ` · apex ${hoveredFilm.apexCm.toFixed(1)} cm` : ""}</div> : null}
            <div className="text-ink-soft">Click to open the film</div>
          </div>
        ) : null}
      </div>
      <ul className="mt-2 flex flex-wrap gap-x-5 gap-y-1 text-xs text-ink-soft" aria-label="Legend">
        {methods.map((m) => (
          <li key={m} className="flex items-center gap-1">
            <svg width="12" height="12" aria-hidden="true"><circle cx="6" cy="6" r={m === primary ? 5 : 4} fill={m === primary ? COLOURS[m] : "#fff"} stroke={COLOURS[m]} strokeWidth="1.5" /></svg>
            {METHOD_LABELS[m]}{m === primary ? " (chart method)" : ""}
          </li>
        ))}
        <li className="flex items-center gap-1"><svg width="18" height="8" aria-hidden="true"><line x1="0" y1="4" x2="18" y2="4" stroke="#4f5860" strokeDasharray="4 3" strokeWidth="1.5" /></svg>Expected course</li>
        <li className="flex items-center gap-1"><span className="inline-block h-3 w-4 bg-estuary-100" aria-hidden="true" />Band ±{data.model.tolerancePoints} points</li>
      </ul>
    </div>
  );
}
