import { armStyle } from './chart-theme.js';

/** A point marker whose shape differs per arm, so arms are told apart without colour. */
export function Marker({
  x,
  y,
  arm,
  r = 3.2,
  filled = true,
}: {
  x: number;
  y: number;
  arm: number;
  r?: number;
  filled?: boolean;
}) {
  const s = armStyle(arm);
  const common = {
    fill: filled ? s.color : 'none',
    stroke: s.color,
    strokeWidth: 1.2,
    fillOpacity: filled ? 0.55 : 0,
  };
  switch (s.marker) {
    case 'square':
      return <rect x={x - r} y={y - r} width={r * 2} height={r * 2} {...common} />;
    case 'triangle':
      return (
        <path
          d={`M${x},${y - r * 1.2} L${x + r * 1.1},${y + r * 0.9} L${x - r * 1.1},${y + r * 0.9} Z`}
          {...common}
        />
      );
    case 'diamond':
      return (
        <path
          d={`M${x},${y - r * 1.2} L${x + r * 1.2},${y} L${x},${y + r * 1.2} L${x - r * 1.2},${y} Z`}
          {...common}
        />
      );
    default:
      return <circle cx={x} cy={y} r={r} {...common} />;
  }
}

export function ArmLegend({ arms }: { arms: { code: string; name: string }[] }) {
  return (
    <ul className="flex flex-wrap gap-x-5 gap-y-1 text-sm text-graphite" aria-label="Arms">
      {arms.map((a, i) => (
        <li key={a.code} className="flex items-center gap-2">
          <svg width="34" height="12" aria-hidden="true">
            <line
              x1="0"
              x2="34"
              y1="6"
              y2="6"
              stroke={armStyle(i).color}
              strokeWidth="2"
              strokeDasharray={armStyle(i).dash}
            />
            <Marker x={17} y={6} arm={i} r={3.5} />
          </svg>
          <span>
            <span className="figure font-semibold text-ink">{a.code}</span> {a.name}
          </span>
        </li>
      ))}
    </ul>
  );
}
