import { CHART } from "./palette";

/**
 * A Pareto chart of one group drawn as plain SVG on the server: categories by count,
 * largest first, bars on the left axis and the cumulative share as a line on the right.
 * The window screen shows one per group (up to dozens), so these carry no chart library:
 * they are in the HTML at first paint and cost the browser nothing to start. Each bar
 * has a <title> for hover; the numbers are also in the observed-count table.
 */
export function ParetoSvg({ name, bars }: { name: string; bars: { category: string; count: number; cumulative: number }[] }) {
  const W = 440;
  const H = 250;
  const m = { top: 10, right: 40, bottom: 92, left: 40 };
  const plotW = W - m.left - m.right;
  const plotH = H - m.top - m.bottom;
  const max = Math.max(1, ...bars.map((b) => b.count));
  const step = niceStep(max);
  const top = Math.ceil(max / step) * step;
  const y = (v: number) => m.top + plotH - (v / top) * plotH;
  const yc = (pct: number) => m.top + plotH - (pct / 100) * plotH;
  const slot = plotW / Math.max(1, bars.length);
  const bw = Math.max(2, slot * 0.72);
  const x = (i: number) => m.left + slot * i + slot / 2;
  const ticks: number[] = [];
  for (let v = 0; v <= top; v += step) ticks.push(v);
  const line = bars.map((b, i) => `${i === 0 ? "M" : "L"}${x(i).toFixed(1)},${yc(b.cumulative).toFixed(1)}`).join(" ");
  const summary = bars
    .slice(0, 3)
    .map((b) => `${b.category} ${b.count}`)
    .join(", ");
  return (
    <svg viewBox={`0 0 ${W} ${H}`} className="pareto-svg" role="img" aria-label={`Pareto chart of ${name}: ${summary}${bars.length > 3 ? ", …" : ""}`}>
      {ticks.map((v) => (
        <g key={v}>
          <line x1={m.left} x2={W - m.right} y1={y(v)} y2={y(v)} stroke={CHART.grid} />
          <text x={m.left - 5} y={y(v) + 4} textAnchor="end" fontSize={10} fill={CHART.axis}>
            {v}
          </text>
        </g>
      ))}
      {[0, 50, 80, 100].map((p) => (
        <text key={p} x={W - m.right + 5} y={yc(p) + 4} fontSize={10} fill={CHART.axis}>
          {p}%
        </text>
      ))}
      <line x1={m.left} x2={m.left} y1={m.top} y2={m.top + plotH} stroke={CHART.axis} />
      <line x1={W - m.right} x2={W - m.right} y1={m.top} y2={m.top + plotH} stroke={CHART.axis} />
      {bars.map((b, i) => (
        <rect key={b.category} x={x(i) - bw / 2} y={y(b.count)} width={bw} height={m.top + plotH - y(b.count)} fill={CHART.structure}>
          <title>
            {b.category}: {b.count} defects, {b.cumulative.toFixed(0)}% cumulative
          </title>
        </rect>
      ))}
      <path d={line} fill="none" stroke={CHART.signal} strokeWidth={1.5} />
      {bars.map((b, i) => (
        <circle key={b.category} cx={x(i)} cy={yc(b.cumulative)} r={2.2} fill={CHART.signal} />
      ))}
      {bars.map((b, i) => (
        <text
          key={b.category}
          transform={`translate(${x(i) + 3},${m.top + plotH + 8}) rotate(-50)`}
          textAnchor="end"
          fontSize={10}
          fill={CHART.axis}
        >
          {b.category.length > 18 ? `${b.category.slice(0, 17)}…` : b.category}
        </text>
      ))}
    </svg>
  );
}

function niceStep(max: number): number {
  const raw = max / 4;
  const power = 10 ** Math.floor(Math.log10(raw));
  const f = raw / power;
  return (f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10) * power;
}
