import { AxisBottom, AxisLeft } from '@visx/axis';
import { Group } from '@visx/group';
import { scaleLinear } from '@visx/scale';
import { Bar, Line } from '@visx/shape';
import { axisTickLabel, chartColors } from './chart-theme.js';
import { formatNumber } from './format.js';
import { useElementWidth } from '../../../lib/use-element-width.js';

export type HistogramGroup = { label: string; bins: Array<{ from: number; to: number; count: number }> };

const HEIGHT = 250;
const MARGIN = { top: 22, right: 20, bottom: 44, left: 52 };

/**
 * Two groups' histograms on one axis, the first above the line and the second below, so where
 * they fail to overlap (no comparable participants) shows as bars with nothing opposite.
 */
export function MirroredHistogram({
  groups,
  xLabel,
  summary,
  testId,
  digits = 2,
}: {
  groups: [HistogramGroup, HistogramGroup];
  xLabel: string;
  summary: string;
  testId: string;
  digits?: number;
}) {
  const { ref, width } = useElementWidth<HTMLDivElement>(480);
  const innerWidth = Math.max(160, width - MARGIN.left - MARGIN.right);
  const innerHeight = HEIGHT - MARGIN.top - MARGIN.bottom;
  const all = groups.flatMap((g) => g.bins);
  const lo = Math.min(...all.map((b) => b.from));
  const hi = Math.max(...all.map((b) => b.to));
  const maxCount = Math.max(1, ...all.map((b) => b.count));
  const x = scaleLinear<number>({ domain: [lo, hi], range: [0, innerWidth] });
  const y = scaleLinear<number>({ domain: [-maxCount, maxCount], range: [innerHeight, 0], nice: true });
  const colors = [chartColors.groupA, chartColors.groupB];

  return (
    <div ref={ref} className="flex w-full flex-col gap-2">
      <svg width={width} height={HEIGHT} role="img" aria-label={summary} data-testid={testId}>
        <Group left={MARGIN.left} top={MARGIN.top}>
          {groups.map((group, gi) =>
            group.bins.map((bin) => {
              const h = Math.abs(y(bin.count) - y(0));
              return (
                <Bar
                  key={`${gi}-${bin.from}`}
                  x={x(bin.from) + 0.5}
                  y={gi === 0 ? y(bin.count) : y(0)}
                  width={Math.max(1, x(bin.to) - x(bin.from) - 1)}
                  height={h}
                  fill={colors[gi]}
                  fillOpacity={0.85}
                />
              );
            }),
          )}
          <Line from={{ x: 0, y: y(0) }} to={{ x: innerWidth, y: y(0) }} stroke={chartColors.ink} />
          <text x={4} y={10} fontSize={11.5} fill={chartColors.ink} fontWeight={600}>
            ▲ {groups[0].label}
          </text>
          <text x={4} y={innerHeight - 4} fontSize={11.5} fill={chartColors.ink} fontWeight={600}>
            ▼ {groups[1].label}
          </text>
          <AxisLeft
            scale={y}
            numTicks={5}
            stroke={chartColors.graphite}
            tickStroke={chartColors.graphite}
            tickFormat={(v) => String(Math.abs(Number(v)))}
            tickLabelProps={() => ({ ...axisTickLabel, textAnchor: 'end', dx: -4, dy: '0.33em' })}
            label="Participants"
            labelProps={{ fill: chartColors.ink, fontSize: 12, textAnchor: 'middle' }}
          />
          <AxisBottom
            top={innerHeight}
            scale={x}
            numTicks={6}
            stroke={chartColors.graphite}
            tickStroke={chartColors.graphite}
            tickFormat={(v) => formatNumber(Number(v), digits)}
            tickLabelProps={() => ({ ...axisTickLabel, textAnchor: 'middle' })}
            label={xLabel}
            labelProps={{ fill: chartColors.ink, fontSize: 12, textAnchor: 'middle' }}
          />
        </Group>
      </svg>
      <details className="text-sm">
        <summary className="cursor-pointer font-semibold text-spruce-deep">
          Show the counts as a table
        </summary>
        <table className="mt-2 w-full text-left text-sm">
          <caption className="sr-only">{summary}</caption>
          <thead>
            <tr className="text-xs text-graphite uppercase">
              <th scope="col" className="px-2 py-1">
                {xLabel}
              </th>
              <th scope="col" className="px-2 py-1 text-right">
                {groups[0].label}
              </th>
              <th scope="col" className="px-2 py-1 text-right">
                {groups[1].label}
              </th>
            </tr>
          </thead>
          <tbody className="figure">
            {groups[0].bins.map((bin, i) => (
              <tr key={bin.from} className="border-t border-rule">
                <td className="px-2 py-1">
                  {formatNumber(bin.from, digits)}–{formatNumber(bin.to, digits)}
                </td>
                <td className="px-2 py-1 text-right">{bin.count}</td>
                <td className="px-2 py-1 text-right">{groups[1].bins[i]?.count ?? '—'}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </details>
    </div>
  );
}
