import type { BalancePooledView } from '@counterpoise/contracts/balance';
import { AxisBottom } from '@visx/axis';
import { Group } from '@visx/group';
import { scaleBand, scaleLinear } from '@visx/scale';
import { Bar, Line } from '@visx/shape';
import { axisTickLabel, chartColors } from './chart-theme.js';
import { useElementWidth } from '../../../lib/use-element-width.js';

type Site = BalancePooledView['sites'][number];

const ROW = 34;
const MARGIN = { top: 8, right: 96, bottom: 40, left: 64 };

/** Enrolled (bar) against each site's target (tick), pooled over arms. */
export function EnrollmentBySiteChart({ sites }: { sites: Site[] }) {
  const { ref, width } = useElementWidth<HTMLDivElement>();
  const innerWidth = Math.max(160, width - MARGIN.left - MARGIN.right);
  const innerHeight = sites.length * ROW;
  const max = Math.max(1, ...sites.flatMap((s) => [s.enrolled, s.enrollmentTarget]));
  const x = scaleLinear<number>({ domain: [0, max], range: [0, innerWidth], nice: true });
  const y = scaleBand<string>({ domain: sites.map((s) => s.siteId), range: [0, innerHeight], padding: 0.3 });
  const summary =
    'Enrollment against target by site: ' +
    sites.map((s) => `${s.code} ${s.enrolled} of ${s.enrollmentTarget}`).join('; ') +
    '.';

  return (
    <div ref={ref} className="w-full">
      <svg
        width={width}
        height={innerHeight + MARGIN.top + MARGIN.bottom}
        role="img"
        aria-label={summary}
        data-testid="enrollment-by-site"
      >
        <Group left={MARGIN.left} top={MARGIN.top}>
          {sites.map((s) => {
            const top = y(s.siteId) ?? 0;
            const h = y.bandwidth();
            const reached = s.enrollmentTarget > 0 && s.enrolled >= s.enrollmentTarget;
            return (
              <g key={s.siteId}>
                <text
                  x={-10}
                  y={top + h / 2}
                  dy="0.35em"
                  textAnchor="end"
                  fontSize={12.5}
                  fontWeight={600}
                  fill={chartColors.ink}
                >
                  {s.code}
                </text>
                <Bar x={0} y={top} width={x(s.enrollmentTarget)} height={h} fill="#efe9df" />
                <Bar x={0} y={top} width={x(s.enrolled)} height={h} fill={chartColors.point} />
                <Line
                  from={{ x: x(s.enrollmentTarget), y: top - 4 }}
                  to={{ x: x(s.enrollmentTarget), y: top + h + 4 }}
                  stroke={chartColors.target}
                  strokeWidth={2}
                />
                <text
                  x={Math.max(x(s.enrolled), x(s.enrollmentTarget)) + 8}
                  y={top + h / 2}
                  dy="0.35em"
                  fontSize={12}
                  fill={chartColors.ink}
                  fontFamily="IBM Plex Mono, ui-monospace, monospace"
                >
                  {s.enrolled}/{s.enrollmentTarget}
                  {reached ? ' ✓' : ''}
                </text>
              </g>
            );
          })}
          <AxisBottom
            top={innerHeight}
            scale={x}
            numTicks={6}
            stroke={chartColors.graphite}
            tickStroke={chartColors.graphite}
            tickLabelProps={() => ({ ...axisTickLabel, textAnchor: 'middle' })}
            label="Participants"
            labelProps={{ fill: chartColors.ink, fontSize: 12, textAnchor: 'middle' }}
          />
        </Group>
      </svg>
      <ul className="mt-2 flex flex-wrap gap-x-5 gap-y-2 text-sm text-graphite" aria-label="Chart key">
        <li className="flex items-center gap-2">
          <span
            aria-hidden="true"
            className="inline-block h-3 w-5"
            style={{ background: chartColors.point }}
          />
          enrolled
        </li>
        <li>✓ target reached</li>
        <li className="flex items-center gap-2">
          <svg width="10" height="16" aria-hidden="true">
            <line x1="5" y1="0" x2="5" y2="16" stroke={chartColors.target} strokeWidth="2" />
          </svg>
          site target
        </li>
      </ul>
    </div>
  );
}
