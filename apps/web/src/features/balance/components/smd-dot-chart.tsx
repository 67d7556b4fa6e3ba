import { useState } from 'react';
import { AxisBottom } from '@visx/axis';
import { GridColumns } from '@visx/grid';
import { Group } from '@visx/group';
import { scaleBand, scaleLinear } from '@visx/scale';
import { Line } from '@visx/shape';
import { TooltipWithBounds, useTooltip } from '@visx/tooltip';
import { axisTickLabel, chartColors } from './chart-theme.js';
import { formatBand, formatNumber, formatSmd } from './format.js';
import type { SmdRow } from './smd-rows.js';
import { useElementWidth } from '../../../lib/use-element-width.js';

const ROW = 30;
const MARGIN = { top: 30, right: 70, bottom: 40, left: 190 };

function Diamond({ x, y, r, fill }: { x: number; y: number; r: number; fill: string }) {
  return <path d={`M${x},${y - r} L${x + r},${y} L${x},${y + r} L${x - r},${y} Z`} fill={fill} />;
}

export function rowSummary(row: SmdRow, threshold: number): string {
  const parts = [`${row.label}: SMD ${formatSmd(row.smd)}`];
  if (row.halfWidth !== null) parts.push(`95% chance band ${formatBand(row.halfWidth)}`);
  if (row.after !== null) parts.push(`after weighting ${formatSmd(row.after)}`);
  if (row.flags.beyondChance) parts.push('beyond the chance band');
  else if (row.flags.smdOverThreshold) parts.push(`over |${threshold}| but within the chance band`);
  if (row.note) parts.push(row.note);
  return parts.join('; ');
}

/**
 * Standardized differences, one row per covariate: the shaded band is what chance alone gives
 * 95% of the time at each covariate's group sizes; the dashed lines are the |0.1| convention.
 */
export function SmdDotChart({
  rows,
  threshold,
  weighted,
}: {
  rows: SmdRow[];
  threshold: number;
  weighted: boolean;
}) {
  const { ref, width } = useElementWidth<HTMLDivElement>();
  const [focused, setFocused] = useState<string | null>(null);
  const tooltip = useTooltip<SmdRow>();

  const innerWidth = Math.max(200, width - MARGIN.left - MARGIN.right);
  const innerHeight = rows.length * ROW;
  const height = innerHeight + MARGIN.top + MARGIN.bottom;

  const extent = Math.max(
    threshold * 2,
    ...rows.flatMap((r) =>
      [r.smd, r.before, r.after, r.halfWidth].map((v) => (v === null ? 0 : Math.abs(v))),
    ),
  );
  const x = scaleLinear<number>({
    domain: [-extent * 1.12, extent * 1.12],
    range: [0, innerWidth],
    nice: true,
  });
  const y = scaleBand<string>({ domain: rows.map((r) => r.id), range: [0, innerHeight], padding: 0 });
  const beyond = rows.filter((r) => r.flags.beyondChance).length;
  const over = rows.filter((r) => r.smd !== null && Math.abs(r.smd) >= threshold).length;
  const largest = rows.reduce<SmdRow | null>(
    (best, r) => (r.smd !== null && (best === null || Math.abs(r.smd) > Math.abs(best.smd ?? 0)) ? r : best),
    null,
  );
  const summary =
    `Standardized mean differences for ${rows.length} covariate comparisons. ` +
    `${over} at or over the |${threshold}| convention, ${beyond} beyond the 95% chance band. ` +
    (largest ? `Largest: ${largest.label}, ${formatSmd(largest.smd)}.` : '') +
    ' The table below gives every value.';

  const show = (row: SmdRow) => {
    const cx = row.smd === null ? 0 : row.smd;
    tooltip.showTooltip({
      tooltipData: row,
      tooltipLeft: MARGIN.left + x(cx),
      tooltipTop: MARGIN.top + (y(row.id) ?? 0),
    });
  };

  return (
    <div ref={ref} className="relative w-full">
      <svg width={width} height={height} role="img" aria-label={summary} data-testid="smd-dot-chart">
        <Group left={MARGIN.left} top={MARGIN.top}>
          {rows.map((row, i) => {
            const top = y(row.id) ?? 0;
            return (
              <g key={`bg-${row.id}`}>
                {i % 2 === 1 && (
                  <rect x={-MARGIN.left} y={top} width={width} height={ROW} fill="#f7f3ec" opacity={0.6} />
                )}
                {row.halfWidth !== null && (
                  <rect
                    x={x(-row.halfWidth)}
                    y={top}
                    width={x(row.halfWidth) - x(-row.halfWidth)}
                    height={ROW}
                    fill={chartColors.band}
                  />
                )}
              </g>
            );
          })}
          <GridColumns scale={x} height={innerHeight} stroke={chartColors.rule} numTicks={8} />
          <Line
            from={{ x: x(0), y: 0 }}
            to={{ x: x(0), y: innerHeight }}
            stroke={chartColors.ink}
            strokeWidth={1}
          />
          {[-threshold, threshold].map((t) => (
            <Line
              key={t}
              from={{ x: x(t), y: -6 }}
              to={{ x: x(t), y: innerHeight }}
              stroke={chartColors.threshold}
              strokeWidth={1.5}
              strokeDasharray="5 4"
            />
          ))}
          <text x={x(threshold) + 4} y={-10} fontSize={11} fill={chartColors.graphite}>
            +{threshold} (convention)
          </text>
          <text x={innerWidth + 12} y={-10} fontSize={11} fill={chartColors.graphite}>
            {weighted ? 'weighted' : 'SMD'}
          </text>
          <text x={x(-threshold) - 4} y={-10} fontSize={11} fill={chartColors.graphite} textAnchor="end">
            −{threshold}
          </text>
          {rows.map((row) => {
            const cy = (y(row.id) ?? 0) + ROW / 2;
            const active = focused === row.id;
            // Cohorts are judged after weighting; trials by the chance band.
            const emphasised = weighted
              ? row.after !== null && Math.abs(row.after) >= threshold
              : row.flags.beyondChance;
            return (
              <g
                key={row.id}
                tabIndex={0}
                role="img"
                aria-label={rowSummary(row, threshold)}
                onFocus={() => {
                  setFocused(row.id);
                  show(row);
                }}
                onBlur={() => {
                  setFocused(null);
                  tooltip.hideTooltip();
                }}
                onMouseEnter={() => show(row)}
                onMouseLeave={() => tooltip.hideTooltip()}
                className="outline-none"
              >
                <rect
                  x={-MARGIN.left}
                  y={cy - ROW / 2}
                  width={MARGIN.left + innerWidth}
                  height={ROW}
                  fill="transparent"
                />
                <text
                  x={-12}
                  y={cy}
                  dy="0.35em"
                  textAnchor="end"
                  fontSize={12.5}
                  fill={chartColors.ink}
                  fontWeight={emphasised ? 700 : 400}
                >
                  {row.label.length > 26 ? `${row.label.slice(0, 25)}…` : row.label}
                </text>
                {active && (
                  <rect
                    x={-MARGIN.left + 2}
                    y={cy - ROW / 2 + 2}
                    width={MARGIN.left + innerWidth - 4}
                    height={ROW - 4}
                    fill="none"
                    stroke="#b04a26"
                    strokeWidth={2.5}
                    rx={3}
                  />
                )}
                {weighted && row.before !== null && row.after !== null && (
                  <>
                    <Line
                      from={{ x: x(row.before), y: cy }}
                      to={{ x: x(row.after), y: cy }}
                      stroke={chartColors.graphite}
                      strokeWidth={1.25}
                    />
                    <circle
                      cx={x(row.before)}
                      cy={cy}
                      r={5.5}
                      fill={chartColors.surface}
                      stroke={chartColors.before}
                      strokeWidth={2}
                    />
                    <circle cx={x(row.after)} cy={cy} r={5.5} fill={chartColors.after} />
                  </>
                )}
                {!weighted &&
                  row.smd !== null &&
                  (row.flags.beyondChance ? (
                    <Diamond x={x(row.smd)} y={cy} r={8} fill={chartColors.flagged} />
                  ) : (
                    <circle cx={x(row.smd)} cy={cy} r={5.5} fill={chartColors.point} />
                  ))}
                <text
                  x={innerWidth + 12}
                  y={cy}
                  dy="0.35em"
                  fontSize={11.5}
                  fontFamily="IBM Plex Mono, ui-monospace, monospace"
                  fill={emphasised ? chartColors.flagged : chartColors.ink}
                  fontWeight={emphasised ? 700 : 400}
                  aria-hidden="true"
                >
                  {formatSmd(weighted && row.after !== null ? row.after : row.smd, 2)}
                </text>
                {row.smd === null && (
                  <text x={x(0) + 8} y={cy} dy="0.35em" fontSize={11} fill={chartColors.graphite}>
                    not computed
                  </text>
                )}
              </g>
            );
          })}
          <AxisBottom
            top={innerHeight}
            scale={x}
            numTicks={8}
            stroke={chartColors.graphite}
            tickStroke={chartColors.graphite}
            tickFormat={(v) => formatNumber(Number(v), 2)}
            tickLabelProps={() => ({ ...axisTickLabel, textAnchor: 'middle' })}
            label="Standardized mean difference (arm − reference)"
            labelProps={{ fill: chartColors.ink, fontSize: 12, textAnchor: 'middle' }}
          />
        </Group>
      </svg>
      {tooltip.tooltipOpen && tooltip.tooltipData && (
        <TooltipWithBounds
          left={tooltip.tooltipLeft}
          top={tooltip.tooltipTop}
          className="pointer-events-none max-w-72 rounded-control border border-rule bg-vellum px-3 py-2 text-sm text-ink shadow-card"
          unstyled
          applyPositionStyle
        >
          <TooltipBody row={tooltip.tooltipData} weighted={weighted} />
        </TooltipWithBounds>
      )}
    </div>
  );
}

function TooltipBody({ row, weighted }: { row: SmdRow; weighted: boolean }) {
  return (
    <div className="flex flex-col gap-0.5">
      <p className="font-semibold">{row.label}</p>
      <p className="figure">SMD {formatSmd(row.smd)}</p>
      {weighted && row.after !== null && <p className="figure">after weighting {formatSmd(row.after)}</p>}
      <p className="figure">chance band {formatBand(row.halfWidth)}</p>
      <p className="figure text-graphite">
        n {row.nArm} vs {row.nReference}
      </p>
      {row.flags.beyondChance && <p className="font-semibold text-brick">beyond the chance band</p>}
      {row.note && <p className="text-graphite">{row.note}</p>}
    </div>
  );
}

/** The key, as HTML so it reflows and reads as text. */
export function SmdLegend({ threshold, weighted }: { threshold: number; weighted: boolean }) {
  return (
    <ul className="flex flex-wrap gap-x-5 gap-y-2 text-sm text-graphite" aria-label="Chart key">
      {weighted ? (
        <>
          <li className="flex items-center gap-2">
            <svg width="14" height="14" aria-hidden="true">
              <circle
                cx="7"
                cy="7"
                r="5"
                fill={chartColors.surface}
                stroke={chartColors.before}
                strokeWidth="2"
              />
            </svg>
            before weighting
          </li>
          <li className="flex items-center gap-2">
            <svg width="14" height="14" aria-hidden="true">
              <circle cx="7" cy="7" r="5.5" fill={chartColors.after} />
            </svg>
            after weighting
          </li>
        </>
      ) : (
        <>
          <li className="flex items-center gap-2">
            <svg width="14" height="14" aria-hidden="true">
              <circle cx="7" cy="7" r="5.5" fill={chartColors.point} />
            </svg>
            SMD within the chance band
          </li>
          <li className="flex items-center gap-2">
            <svg width="16" height="16" aria-hidden="true">
              <path d="M8,1 L15,8 L8,15 L1,8 Z" fill={chartColors.flagged} />
            </svg>
            beyond the chance band
          </li>
        </>
      )}
      <li className="flex items-center gap-2">
        <span
          aria-hidden="true"
          className="inline-block h-3.5 w-6"
          style={{ background: chartColors.band }}
        />
        {weighted
          ? '95% band randomization alone would give at these group sizes (a yardstick; a cohort is not randomized)'
          : '95% chance band for the current group sizes'}
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
        |SMD| = {threshold}, a convention (Normand et al. 2001; Austin 2009), not a test
      </li>
    </ul>
  );
}
