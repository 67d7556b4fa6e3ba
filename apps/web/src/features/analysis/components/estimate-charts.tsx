import { AxisBottom } from '@visx/axis';
import { GridColumns } from '@visx/grid';
import { Group } from '@visx/group';
import { scaleBand, scaleLinear } from '@visx/scale';
import { Line } from '@visx/shape';
import type { RunResult } from '@counterpoise/contracts/analysis';
import { armStyle, axisTickLabel, chartColors } from './chart-theme.js';
import { num, percent } from './format.js';
import { Marker } from './marker.js';
import { useElementWidth } from '../../../lib/use-element-width.js';

const ROW = 44;
const M = { top: 12, right: 24, bottom: 40, left: 150 };

/** Adjusted means with their confidence intervals; the raw mean is the hollow marker. */
export function AdjustedMeansChart({ result }: { result: RunResult }) {
  const { ref, width } = useElementWidth<HTMLDivElement>(560);
  const rows = result.adjustedMeans;
  const innerW = Math.max(200, width - M.left - M.right);
  const innerH = rows.length * ROW;
  const lo = Math.min(...rows.map((r) => Math.min(r.lower, r.rawMean)));
  const hi = Math.max(...rows.map((r) => Math.max(r.upper, r.rawMean)));
  const pad = (hi - lo) * 0.15 || 1;
  const x = scaleLinear<number>({ domain: [lo - pad, hi + pad], range: [0, innerW], nice: true });
  const y = scaleBand<string>({ domain: rows.map((r) => r.code), range: [0, innerH], padding: 0.3 });
  const level = `${Math.round(result.confidenceLevel * 100)}%`;
  const unit = result.spec.outcome.unit ? ` ${result.spec.outcome.unit}` : '';
  const axisUnit = result.spec.outcome.unit ? ` (${result.spec.outcome.unit})` : '';
  const alt =
    `Adjusted means of ${result.spec.outcome.label} with ${level} confidence intervals: ` +
    rows
      .map(
        (r) =>
          `${r.code} ${num(r.mean, 1)}${unit} (${num(r.lower, 1)} to ${num(r.upper, 1)}), raw mean ${num(r.rawMean, 1)}`,
      )
      .join('; ') +
    '.';
  return (
    <figure ref={ref} className="m-0" data-testid="adjusted-means-chart">
      <svg width={width} height={innerH + M.top + M.bottom} role="img" aria-label={alt}>
        <Group left={M.left} top={M.top}>
          <GridColumns scale={x} height={innerH} stroke={chartColors.rule} numTicks={6} />
          {rows.map((r, i) => {
            const cy = (y(r.code) ?? 0) + y.bandwidth() / 2;
            const s = armStyle(i);
            return (
              <g key={r.code}>
                <text x={-12} y={cy} dy="0.32em" textAnchor="end" fontSize={12} fill={chartColors.ink}>
                  {r.code}
                </text>
                <Line
                  from={{ x: x(r.lower), y: cy }}
                  to={{ x: x(r.upper), y: cy }}
                  stroke={s.color}
                  strokeWidth={2.5}
                />
                <Line
                  from={{ x: x(r.lower), y: cy - 6 }}
                  to={{ x: x(r.lower), y: cy + 6 }}
                  stroke={s.color}
                  strokeWidth={2}
                />
                <Line
                  from={{ x: x(r.upper), y: cy - 6 }}
                  to={{ x: x(r.upper), y: cy + 6 }}
                  stroke={s.color}
                  strokeWidth={2}
                />
                <Marker x={x(r.rawMean)} y={cy} arm={i} r={4} filled={false} />
                <Marker x={x(r.mean)} y={cy} arm={i} r={5.5} />
              </g>
            );
          })}
          <AxisBottom
            top={innerH}
            scale={x}
            numTicks={6}
            stroke={chartColors.graphite}
            tickStroke={chartColors.graphite}
            tickLabelProps={() => ({ ...axisTickLabel, textAnchor: 'middle' })}
            label={`${result.spec.outcome.label}${axisUnit}`}
            labelProps={{ fill: chartColors.graphite, fontSize: 12, textAnchor: 'middle' }}
          />
        </Group>
      </svg>
      <figcaption className="mt-1 text-xs text-graphite">
        Filled marker: adjusted mean with its {level} CI. Hollow marker: raw (unadjusted) mean.
      </figcaption>
    </figure>
  );
}

const partColors: Record<string, string> = { group: chartColors.spruce, error: '#d9d2c5' };
const otherColors = [chartColors.harbor, chartColors.ochre, '#7a6a9c', '#5c7f6a', '#8a5a44', '#4f7c8f'];

/** The total sum of squares split into covariates (sequential), the adjusted arm effect and error. */
export function VariancePartitionBar({ result }: { result: RunResult }) {
  const parts = result.partition;
  let other = 0;
  const colored = parts.map((p) => ({
    ...p,
    color: partColors[p.source] ?? otherColors[other++ % otherColors.length]!,
  }));
  const alt = `Share of the total sum of squares: ${colored.map((p) => `${p.label} ${percent(p.share)}`).join(', ')}.`;
  let offset = 0;
  return (
    <figure className="m-0" data-testid="variance-partition">
      <div
        className="flex h-8 w-full overflow-hidden rounded-control border border-rule"
        role="img"
        aria-label={alt}
      >
        {colored.map((p) => {
          const left = offset;
          offset += p.share;
          return (
            <div
              key={p.source}
              title={`${p.label}: ${percent(p.share)}`}
              style={{
                width: `${Math.max(p.share * 100, 0)}%`,
                background: p.color,
                marginLeft: left === 0 ? 0 : undefined,
              }}
            />
          );
        })}
      </div>
      <ul className="mt-2 flex flex-wrap gap-x-4 gap-y-1 text-sm text-graphite">
        {colored.map((p) => (
          <li key={p.source} className="flex items-center gap-1.5">
            <span
              aria-hidden="true"
              className="inline-block size-3 rounded-sm border border-rule"
              style={{ background: p.color }}
            />
            {p.label} <span className="figure text-ink">{percent(p.share)}</span>
          </li>
        ))}
      </ul>
      <figcaption className="mt-1 text-xs text-graphite">
        Sequential sums of squares: covariates first, then the arm adjusted for them, then error; they add up
        to the total.
      </figcaption>
    </figure>
  );
}
