import { balanceCautions, type BalanceArmsView } from '@counterpoise/contracts/balance';
import { Callout } from '../../../components/ui/callout.js';
import { chanceBin, chanceBins } from './chart-theme.js';
import { armLabel, formatBand, formatSmd } from './format.js';

// Hatching marks a suppressed cell without relying on colour alone.
const suppressed = 'bg-[repeating-linear-gradient(45deg,#f7f3ec_0,#f7f3ec_4px,#e8e1d4_4px,#e8e1d4_8px)]';

type SiteRow = NonNullable<BalanceArmsView['siteGrid']>[number];

/**
 * Sites down, covariates across; each cell is coloured by how its |SMD| compares with the site's
 * own chance band and also carries the value, so colour is never the only cue. Sites with fewer than the minimum per arm show no SMD at all:
 * a figure from a handful of participants would be read as a signal it is not (caution 11).
 */
export function SiteGrid({ view }: { view: BalanceArmsView }) {
  const grid = view.siteGrid ?? [];
  const minPerArm = view.rules.minPerArmForSiteAlerts;
  const multi = view.arms.length > 2;

  return (
    <div className="flex flex-col gap-3">
      <Callout tone="caution" role="note">
        <p>
          {balanceCautions.smallSites} Here the minimum is <span className="figure">{minPerArm}</span> per
          arm.
        </p>
      </Callout>
      <div className="overflow-x-auto rounded-card border border-rule bg-vellum shadow-card">
        <table className="w-full border-collapse text-sm" data-testid="site-grid">
          <caption className="sr-only">
            SMD by site and covariate. Sites too small to judge have their values suppressed.
          </caption>
          <thead className="border-b border-rule bg-paper/70">
            <tr>
              <th
                scope="col"
                className="px-3 py-2.5 text-left text-xs font-semibold tracking-wide text-graphite uppercase"
              >
                Site
              </th>
              <th
                scope="col"
                className="px-3 py-2.5 text-right text-xs font-semibold tracking-wide text-graphite uppercase"
              >
                n by arm
              </th>
              {view.covariates.map((c) => (
                <th
                  key={c.key}
                  scope="col"
                  className="px-2 py-2.5 text-center text-xs font-semibold tracking-wide text-graphite uppercase"
                >
                  {c.label}
                </th>
              ))}
            </tr>
          </thead>
          <tbody className="divide-y divide-rule">
            {grid.map((site) => (
              <SiteGridRow key={site.siteId} site={site} view={view} multi={multi} />
            ))}
          </tbody>
        </table>
      </div>
      <ul
        className="flex flex-wrap gap-x-4 gap-y-2 text-sm text-graphite"
        aria-label="Colour key: |SMD| against the site's chance band"
      >
        <li className="font-semibold text-ink">|SMD| against the site&apos;s 95% chance band:</li>
        {chanceBins.map((b) => (
          <li key={b.label} className="flex items-center gap-1.5">
            <span
              aria-hidden="true"
              className="inline-block size-3.5 rounded-sm border border-rule"
              style={{ background: b.bg }}
            />
            {b.label}
          </li>
        ))}
        <li className="flex items-center gap-1.5">
          <span aria-hidden="true" className="font-bold text-brick">
            ◆
          </span>
          beyond the site's chance band
        </li>
        <li className="flex items-center gap-1.5">
          <span
            aria-hidden="true"
            className={`${suppressed} inline-block size-3.5 rounded-sm border border-rule`}
          />
          too small to judge (value suppressed)
        </li>
      </ul>
    </div>
  );
}

function SiteGridRow({ site, view, multi }: { site: SiteRow; view: BalanceArmsView; multi: boolean }) {
  return (
    <tr data-testid={`site-row-${site.code}`}>
      <th scope="row" className="px-3 py-2 text-left align-top font-normal">
        <span className="font-semibold text-ink">{site.code}</span>
        <span className="block text-xs text-graphite">{site.name}</span>
        {!site.judgeable && (
          <span className="mt-1 inline-block rounded-full border border-pebble px-1.5 text-xs font-semibold text-graphite">
            too small to judge
          </span>
        )}
      </th>
      <td className="figure px-3 py-2 text-right align-top whitespace-nowrap text-ink">
        {site.nByArm.map((a) => `${armLabel(view.arms, a.armId)} ${a.n}`).join(' · ')}
      </td>
      {view.covariates.map((c) => {
        const cell = site.cells.find((x) => x.key === c.key);
        if (!site.judgeable) {
          return (
            <td key={c.key} className={`${suppressed} px-2 py-2 text-center text-graphite`}>
              <span aria-hidden="true">—</span>
              <span className="sr-only">suppressed: site too small to judge</span>
            </td>
          );
        }
        const first = cell?.comparisons[0];
        const bin =
          first?.smd !== null &&
          first?.smd !== undefined &&
          first.halfWidth !== null &&
          first.halfWidth !== undefined
            ? chanceBin(Math.abs(first.smd), first.halfWidth)
            : null;
        return (
          <td
            key={c.key}
            className="px-2 py-2 text-center"
            style={bin ? { background: bin.bg, color: bin.fg } : undefined}
          >
            {(cell?.comparisons ?? []).map((cmp) => (
              <span
                key={cmp.armId}
                className="figure block whitespace-nowrap"
                title={`chance band ${formatBand(cmp.halfWidth)}`}
              >
                {multi && <span className="text-xs">{armLabel(view.arms, cmp.armId)} </span>}
                {cmp.flags.beyondChance && (
                  <>
                    <span aria-hidden="true" className="font-bold text-brick">
                      ◆{' '}
                    </span>
                    <span className="sr-only">beyond the chance band: </span>
                  </>
                )}
                <span className={cmp.flags.beyondChance ? 'font-bold' : undefined}>
                  {formatSmd(cmp.smd, 2)}
                </span>
                <span className="sr-only"> (chance band {formatBand(cmp.halfWidth)})</span>
              </span>
            ))}
          </td>
        );
      })}
    </tr>
  );
}
