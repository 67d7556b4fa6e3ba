import { AxisBottom, AxisLeft } from '@visx/axis';
import { Group } from '@visx/group';
import { scaleLinear } from '@visx/scale';
import { Line } from '@visx/shape';
import type { RunResult } from '@counterpoise/contracts/analysis';
import { armStyle, axisTickLabel, chartColors } from './chart-theme.js';
import { num } from './format.js';
import { ArmLegend, Marker } from './marker.js';
import { useElementWidth } from '../../../lib/use-element-width.js';

const M = { top: 12, right: 20, bottom: 46, left: 60 };
const H = 340;

/**
 * Outcome against the covariate, per arm, with each arm's own least-squares line (solid, the
 * arm's dash) and the common-slope ANCOVA line (thin grey): lines that cross or fan out are
 * what the slope-homogeneity test looks for.
 */
export function LinearityChart({
  linearity,
  outcome,
}: {
  linearity: NonNullable<RunResult['linearity']>;
  outcome: RunResult['spec']['outcome'];
}) {
  const { ref, width } = useElementWidth<HTMLDivElement>(560);
  const all = linearity.groups.flatMap((g) => g.points);
  const innerW = Math.max(200, width - M.left - M.right);
  const innerH = H - M.top - M.bottom;
  const xs = all.map((p) => p[0]);
  const ys = all.map((p) => p[1]);
  const x = scaleLinear<number>({
    domain: [Math.min(...xs), Math.max(...xs)],
    range: [0, innerW],
    nice: true,
  });
  const y = scaleLinear<number>({
    domain: [Math.min(...ys), Math.max(...ys)],
    range: [innerH, 0],
    nice: true,
  });
  const cov = `${linearity.covariate.label}${linearity.covariate.unit ? ` (${linearity.covariate.unit})` : ''}`;
  const alt =
    `Scatter of ${outcome.label} against ${cov} by arm, ${linearity.totalPoints} participants${linearity.downsampled ? ' (points thinned for drawing)' : ''}. ` +
    linearity.groups
      .map(
        (g) =>
          `${g.code}: own slope ${g.withinGroupLine ? num(g.withinGroupLine.slope, 3) : 'not estimable'}, common slope ${num(g.commonSlopeLine.slope, 3)}`,
      )
      .join('; ') +
    '.';
  const clipY = (v: number) => Math.max(0, Math.min(innerH, v));
  return (
    <figure ref={ref} className="m-0" data-testid="linearity-chart">
      <ArmLegend arms={linearity.groups} />
      <svg width={width} height={H} role="img" aria-label={alt} className="mt-2">
        <Group left={M.left} top={M.top}>
          {linearity.groups.map((g, i) =>
            g.points.map((p, j) => <Marker key={`${g.code}-${j}`} x={x(p[0])} y={y(p[1])} arm={i} r={2.6} />),
          )}
          {linearity.groups.map((g, i) => {
            const s = armStyle(i);
            const at = (line: { intercept: number; slope: number }, v: number) =>
              clipY(y(line.intercept + line.slope * v));
            return (
              <g key={g.code}>
                <Line
                  from={{ x: x(g.xMin), y: at(g.commonSlopeLine, g.xMin) }}
                  to={{ x: x(g.xMax), y: at(g.commonSlopeLine, g.xMax) }}
                  stroke={chartColors.graphite}
                  strokeWidth={1}
                />
                {g.withinGroupLine && (
                  <Line
                    from={{ x: x(g.xMin), y: at(g.withinGroupLine, g.xMin) }}
                    to={{ x: x(g.xMax), y: at(g.withinGroupLine, g.xMax) }}
                    stroke={s.color}
                    strokeWidth={2.5}
                    strokeDasharray={s.dash}
                  />
                )}
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
            label={cov}
            labelProps={{ fill: chartColors.graphite, fontSize: 12, textAnchor: 'middle' }}
          />
          <AxisLeft
            scale={y}
            numTicks={6}
            stroke={chartColors.graphite}
            tickStroke={chartColors.graphite}
            tickLabelProps={() => ({ ...axisTickLabel, textAnchor: 'end', dx: -4, dy: '0.3em' })}
            label={outcome.label}
            labelProps={{ fill: chartColors.graphite, fontSize: 12, textAnchor: 'middle' }}
          />
        </Group>
      </svg>
      <figcaption className="text-xs text-graphite">
        Thick lines: each arm&apos;s own fit. Thin grey lines: the common-slope ANCOVA fit (other covariates
        at their means).
      </figcaption>
    </figure>
  );
}
