import { NavLink } from 'react-router-dom';
import { cn } from '../../lib/cn.js';

export type TabNavItem = { id: string; label: string; to: string; end?: boolean };

/** Section navigation rendered as links (each tab is a route, so it is bookmarkable). */
export function TabNav({ label, items }: { label: string; items: TabNavItem[] }) {
  return (
    <nav aria-label={label} className="border-b border-rule">
      <ul className="-mb-px flex flex-wrap gap-1">
        {items.map((item) => (
          <li key={item.id}>
            <NavLink
              to={item.to}
              end={item.end ?? false}
              className={({ isActive }) =>
                cn(
                  'inline-flex h-10 items-center border-b-[3px] px-3 text-sm font-semibold',
                  isActive
                    ? 'border-spruce text-spruce-deep'
                    : 'border-transparent text-graphite hover:border-pebble hover:text-ink',
                )
              }
            >
              {item.label}
            </NavLink>
          </li>
        ))}
      </ul>
    </nav>
  );
}
