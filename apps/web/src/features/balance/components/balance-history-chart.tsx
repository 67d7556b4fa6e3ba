import { useId, useMemo, useState } from 'react';
import type { BalanceHistory } from '@counterpoise/contracts/balance';
import { AxisBottom, AxisLeft } from '@visx/axis';
import { GridRows } from '@visx/grid';
import { Group } from '@visx/group';
import { scaleLinear } from '@visx/scale';
import { Area, Line, LinePath } from '@visx/shape';
import { SelectField } from '../../../components/ui/field.js';
import { axisTickLabel, chartColors } from './chart-theme.js';
import { comparisonLabel, formatBand, formatNumber, formatSmd } from './format.js';
import { useElementWidth } from '../../../lib/use-element-width.js';

const HEIGHT = 280;
const MARGIN = { top: 16, right: 24, bottom: 44, left: 56 };

type Series = BalanceHistory['series'][number];
type Point = Series['points'][number];

/**
 * SMD of one covariate against the number enrolled. The band is ±1.96·sqrt(1/n_arm + 1/n_ref) at
 * each point: it narrows as n grows, so an early wide swing reads as chance.
 */
export function BalanceHistoryChart({ history }: { history: BalanceHistory }) {
  const seriesOptions = history.series;
  const [selected, setSelected] = useState<string>(() => {
    const first = seriesOptions[0];
    return first ? `${first.key}:${first.armId}` : '';
  });
  const series = seriesOptions.find((s) => `${s.key}:${s.armId}` === selected) ?? seriesOptions[0];
  const { ref, width } = useElementWidth<HTMLDivElement>();
  const tableId = useId();

  const points = useMemo(
    () =>
      (series?.points ?? [])
        .filter((p) => p.enrolledCount > 0)
        .sort((a, b) => a.enrolledCount - b.enrolledCount),
    [series],
  );
  if (!series)
    return <p className="text-sm text-graphite">No history yet: it builds up as participants enroll.</p>;

  const multi = history.arms.length > 2;
  const label = (s: Series) =>
    multi && history.referenceArmId
      ? `${s.label} (${comparisonLabel(history.arms, s.armId, history.referenceArmId)})`
      : s.label;

  const innerWidth = Math.max(200, width - MARGIN.left - MARGIN.right);
  const innerHeight = HEIGHT - MARGIN.top - MARGIN.bottom;
  const maxN = Math.max(1, ...points.map((p) => p.enrolledCount));
  const minN = Math.min(maxN, ...points.map((p) => p.enrolledCount));
  const latestBand = [...points].reverse().find((p) => p.halfWidth !== null)?.halfWidth ?? 0;
  // Early bands are very wide; size the axis on the latest band so the recent part stays readable.
  const extent = Math.max(
    history.threshold * 2,
    ...points.map((p) => Math.abs(p.smd ?? 0)),
    latestBand * 1.6,
  );
  const yMax = Math.min(1.5, extent * 1.15);
  // One snapshot gives no span to draw over: widen the axis around it.
  const x = scaleLinear<number>({
    domain: minN < maxN ? [minN, maxN] : [0, Math.ceil(maxN * 1.05)],
    range: [0, innerWidth],
  });
  const y = scaleLinear<number>({ domain: [-yMax, yMax], range: [innerHeight, 0], nice: true, clamp: true });
  const banded = points.filter((p): p is Point & { halfWidth: number } => p.halfWidth !== null);
  const drawn = points.filter((p): p is Point & { smd: number } => p.smd !== null);
  const last = drawn[drawn.length - 1];
  const lastBand = banded[banded.length - 1];
  const summary =
    `${label(series)}: SMD over enrollment from ${minN} to ${maxN} participants. ` +
    (last ? `Latest SMD ${formatSmd(last.smd)} at ${last.enrolledCount} enrolled` : 'No SMD yet') +
    (lastBand ? `, chance band ${formatBand(lastBand.halfWidth)}.` : '.') +
    ' The table below lists every point.';

  return (
    <div className="flex flex-col gap-3">
      <SelectField
        label="Covariate"
        value={selected}
        onChange={(e) => setSelected(e.currentTarget.value)}
        frameClassName="max-w-sm"
        data-testid="history-covariate"
      >
        {seriesOptions.map((s) => (
          <option key={`${s.key}:${s.armId}`} value={`${s.key}:${s.armId}`}>
            {label(s)}
          </option>
        ))}
      </SelectField>
      {points.length < 2 && (
        <p className="text-sm text-graphite" role="note">
          Only one snapshot so far: the line and its narrowing band fill in as enrollment continues and each
          change is recomputed.
        </p>
      )}
      <div ref={ref} className="w-full">
        <svg
          width={width}
          height={HEIGHT}
          role="img"
          aria-label={summary}
          data-testid="balance-history-chart"
        >
          <Group left={MARGIN.left} top={MARGIN.top}>
            <GridRows scale={y} width={innerWidth} stroke={chartColors.rule} numTicks={6} />
            <Area<Point & { halfWidth: number }>
              data={banded}
              x={(p) => x(p.enrolledCount)}
              y0={(p) => y(-p.halfWidth)}
              y1={(p) => y(p.halfWidth)}
              fill={chartColors.band}
            />
            <LinePath<Point & { halfWidth: number }>
              data={banded}
              x={(p) => x(p.enrolledCount)}
              y={(p) => y(p.halfWidth)}
              stroke={chartColors.bandEdge}
              strokeWidth={1}
              strokeOpacity={0.6}
            />
            <LinePath<Point & { halfWidth: number }>
              data={banded}
              x={(p) => x(p.enrolledCount)}
              y={(p) => y(-p.halfWidth)}
              stroke={chartColors.bandEdge}
              strokeWidth={1}
              strokeOpacity={0.6}
            />
            <Line from={{ x: 0, y: y(0) }} to={{ x: innerWidth, y: y(0) }} stroke={chartColors.ink} />
            {[-history.threshold, history.threshold].map((t) => (
              <Line
                key={t}
                from={{ x: 0, y: y(t) }}
                to={{ x: innerWidth, y: y(t) }}
                stroke={chartColors.threshold}
                strokeWidth={1.5}
                strokeDasharray="5 4"
              />
            ))}
            <text
              x={innerWidth - 4}
              y={y(history.threshold) - 5}
              fontSize={11}
              fill={chartColors.graphite}
              textAnchor="end"
            >
              ±{history.threshold} (convention)
            </text>
            <LinePath<Point & { smd: number }>
              data={drawn}
              x={(p) => x(p.enrolledCount)}
              y={(p) => y(p.smd)}
              stroke={chartColors.point}
              strokeWidth={2}
            />
            {banded.length === 1 && lastBand && (
              <rect
                x={x(lastBand.enrolledCount) - 8}
                width={16}
                y={y(lastBand.halfWidth)}
                height={y(-lastBand.halfWidth) - y(lastBand.halfWidth)}
                fill={chartColors.band}
                stroke={chartColors.bandEdge}
                strokeOpacity={0.6}
              />
            )}
            {last && <circle cx={x(last.enrolledCount)} cy={y(last.smd)} r={4.5} fill={chartColors.point} />}
            <AxisLeft
              scale={y}
              numTicks={6}
              stroke={chartColors.graphite}
              tickStroke={chartColors.graphite}
              tickFormat={(v) => formatNumber(Number(v), 2)}
              tickLabelProps={() => ({ ...axisTickLabel, textAnchor: 'end', dx: -4, dy: '0.33em' })}
              label="SMD"
              labelProps={{ fill: chartColors.ink, fontSize: 12, textAnchor: 'middle' }}
            />
            <AxisBottom
              top={innerHeight}
              scale={x}
              numTicks={Math.min(8, Math.max(2, Math.floor(innerWidth / 80)))}
              stroke={chartColors.graphite}
              tickStroke={chartColors.graphite}
              tickFormat={(v) => String(Math.round(Number(v)))}
              tickLabelProps={() => ({ ...axisTickLabel, textAnchor: 'middle' })}
              label={
                history.scope.siteId ? 'Participants enrolled in the whole study' : 'Participants enrolled'
              }
              labelProps={{ fill: chartColors.ink, fontSize: 12, textAnchor: 'middle' }}
            />
          </Group>
        </svg>
      </div>
      <ul className="flex flex-wrap gap-x-5 gap-y-2 text-sm text-graphite" aria-label="Chart key">
        <li className="flex items-center gap-2">
          <svg width="24" height="10" aria-hidden="true">
            <line x1="0" y1="5" x2="24" y2="5" stroke={chartColors.point} strokeWidth="2" />
          </svg>
          SMD at each snapshot
        </li>
        <li className="flex items-center gap-2">
          <span
            aria-hidden="true"
            className="inline-block h-3.5 w-6"
            style={{ background: chartColors.band }}
          />
          95% chance band at that point's group sizes
        </li>
        <li className="flex items-center gap-2">
          <svg width="24" height="10" aria-hidden="true">
            <line
              x1="0"
              y1="5"
              x2="24"
              y2="5"
              stroke={chartColors.threshold}
              strokeWidth="1.5"
              strokeDasharray="5 4"
            />
          </svg>
          |SMD| = {history.threshold}, a convention
        </li>
      </ul>
      <details className="text-sm">
        <summary className="cursor-pointer font-semibold text-spruce-deep">
          Show the points as a table
        </summary>
        <div className="mt-2 max-h-72 overflow-auto">
          <table id={tableId} className="w-full text-left text-sm">
            <caption className="sr-only">{label(series)}: SMD and chance band by number enrolled</caption>
            <thead>
              <tr className="text-xs text-graphite uppercase">
                <th scope="col" className="px-2 py-1 text-right">
                  Enrolled
                </th>
                <th scope="col" className="px-2 py-1 text-right">
                  SMD
                </th>
                <th scope="col" className="px-2 py-1 text-right">
                  Chance band
                </th>
              </tr>
            </thead>
            <tbody className="figure">
              {points.map((p) => (
                <tr key={`${p.computedAt}-${p.enrolledCount}`} className="border-t border-rule">
                  <td className="px-2 py-1 text-right">{p.enrolledCount}</td>
                  <td className="px-2 py-1 text-right">{formatSmd(p.smd)}</td>
                  <td className="px-2 py-1 text-right">{formatBand(p.halfWidth)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </details>
    </div>
  );
}
