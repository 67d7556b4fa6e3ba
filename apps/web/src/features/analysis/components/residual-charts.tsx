import { AxisBottom, AxisLeft } from '@visx/axis';
import { Group } from '@visx/group';
import { scaleLinear } from '@visx/scale';
import { Bar, Line } from '@visx/shape';
import type { RunResult } from '@counterpoise/contracts/analysis';
import { axisTickLabel, chartColors } from './chart-theme.js';
import { num, pValue } from './format.js';
import { useElementWidth } from '../../../lib/use-element-width.js';

const M = { top: 12, right: 16, bottom: 44, left: 52 };
const H = 240;

/** Normal Q-Q plot of the standardized residuals: points near the line mean roughly normal residuals. */
export function QqPlot({ normality }: { normality: RunResult['normality'] }) {
  const { ref, width } = useElementWidth<HTMLDivElement>(360);
  const pts = normality.qq;
  const innerW = Math.max(160, width - M.left - M.right);
  const innerH = H - M.top - M.bottom;
  const ext = Math.max(3, ...pts.map((p) => Math.max(Math.abs(p.theoretical), Math.abs(p.sample)))) * 1.05;
  const x = scaleLinear<number>({ domain: [-ext, ext], range: [0, innerW] });
  const y = scaleLinear<number>({ domain: [-ext, ext], range: [innerH, 0] });
  const sw = normality.shapiroWilk;
  const alt = `Normal Q-Q plot of ${pts.length} standardized residuals${sw ? `; Shapiro-Wilk W ${num(sw.w, 4)}, p ${pValue(sw.p)}` : ''}; skewness ${num(normality.skewness)}, excess kurtosis ${num(normality.excessKurtosis)}.`;
  return (
    <figure ref={ref} className="m-0" data-testid="qq-plot">
      <svg width={width} height={H} role="img" aria-label={alt}>
        <Group left={M.left} top={M.top}>
          <Line
            from={{ x: x(-ext), y: y(-ext) }}
            to={{ x: x(ext), y: y(ext) }}
            stroke={chartColors.graphite}
            strokeDasharray="4 3"
          />
          {pts.map((p, i) => (
            <circle
              key={i}
              cx={x(p.theoretical)}
              cy={y(p.sample)}
              r={2.6}
              fill={chartColors.harbor}
              fillOpacity={0.6}
            />
          ))}
          <AxisBottom
            top={innerH}
            scale={x}
            numTicks={5}
            stroke={chartColors.graphite}
            tickStroke={chartColors.graphite}
            tickLabelProps={() => ({ ...axisTickLabel, textAnchor: 'middle' })}
            label="Normal quantile"
            labelProps={{ fill: chartColors.graphite, fontSize: 12, textAnchor: 'middle' }}
          />
          <AxisLeft
            scale={y}
            numTicks={5}
            stroke={chartColors.graphite}
            tickStroke={chartColors.graphite}
            tickLabelProps={() => ({ ...axisTickLabel, textAnchor: 'end', dx: -4, dy: '0.3em' })}
            label="Standardized residual"
            labelProps={{ fill: chartColors.graphite, fontSize: 12, textAnchor: 'middle' }}
          />
        </Group>
      </svg>
      <figcaption className="text-xs text-graphite">Blom plotting positions; residual / root MSE.</figcaption>
    </figure>
  );
}

export function ResidualHistogram({ normality }: { normality: RunResult['normality'] }) {
  const { ref, width } = useElementWidth<HTMLDivElement>(360);
  const bins = normality.histogram;
  const innerW = Math.max(160, width - M.left - M.right);
  const innerH = H - M.top - M.bottom;
  const x = scaleLinear<number>({ domain: [bins[0]?.from ?? 0, bins.at(-1)?.to ?? 1], range: [0, innerW] });
  const y = scaleLinear<number>({
    domain: [0, Math.max(1, ...bins.map((b) => b.count))],
    range: [innerH, 0],
    nice: true,
  });
  const alt = `Histogram of residuals in ${bins.length} bins from ${num(bins[0]?.from, 1)} to ${num(bins.at(-1)?.to, 1)}; the fullest bin holds ${Math.max(...bins.map((b) => b.count))} participants.`;
  return (
    <figure ref={ref} className="m-0" data-testid="residual-histogram">
      <svg width={width} height={H} role="img" aria-label={alt}>
        <Group left={M.left} top={M.top}>
          {bins.map((b) => (
            <Bar
              key={b.from}
              x={x(b.from) + 0.5}
              y={y(b.count)}
              width={Math.max(1, x(b.to) - x(b.from) - 1)}
              height={innerH - y(b.count)}
              fill={chartColors.spruce}
              fillOpacity={0.75}
            />
          ))}
          <AxisBottom
            top={innerH}
            scale={x}
            numTicks={5}
            stroke={chartColors.graphite}
            tickStroke={chartColors.graphite}
            tickLabelProps={() => ({ ...axisTickLabel, textAnchor: 'middle' })}
            label="Residual"
            labelProps={{ fill: chartColors.graphite, fontSize: 12, textAnchor: 'middle' }}
          />
          <AxisLeft
            scale={y}
            numTicks={4}
            stroke={chartColors.graphite}
            tickStroke={chartColors.graphite}
            tickLabelProps={() => ({ ...axisTickLabel, textAnchor: 'end', dx: -4, dy: '0.3em' })}
            label="Participants"
            labelProps={{ fill: chartColors.graphite, fontSize: 12, textAnchor: 'middle' }}
          />
        </Group>
      </svg>
      <figcaption className="text-xs text-graphite">Bins by Sturges' rule.</figcaption>
    </figure>
  );
}
