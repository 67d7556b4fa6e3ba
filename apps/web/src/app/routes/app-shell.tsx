import { Link, Navigate, NavLink, Outlet, useLocation, useNavigate } from 'react-router-dom';
import type { Me } from '@counterpoise/contracts/auth';
import { paths } from '../../config/paths.js';
import { BrandMark } from '../../components/ui/brand-mark.js';
import { Button } from '../../components/ui/button.js';
import { ErrorState, LoadingState } from '../../components/ui/states.js';
import { useMe } from '../../features/auth/api/get-me.js';
import { useSignOut } from '../../features/auth/api/sign-out.js';
import { roleLabels, rolesOf, topNavFor, type TopNavItem } from '../../lib/authorization.js';
import { cn } from '../../lib/cn.js';

const navTargets: Record<TopNavItem, { label: string; to: string }> = {
  studies: { label: 'Studies', to: paths.studies.list.href() },
  audit: { label: 'Audit trail', to: paths.audit.href() },
  users: { label: 'Users', to: paths.admin.users.href() },
  outbox: { label: 'Outbox', to: paths.admin.outbox.href() },
};

/** Signed-in frame: guards the session, then header, role-aware navigation and the page. */
export function AppShell() {
  const me = useMe();
  const location = useLocation();

  if (me.isPending) return <LoadingState className="justify-center" label="Checking your session…" />;
  if (me.isError) {
    return (
      <main className="mx-auto max-w-2xl px-6 py-16">
        <ErrorState
          title="Counterpoise could not reach its server"
          error={me.error}
          onRetry={() => void me.refetch()}
        />
      </main>
    );
  }
  if (!me.data) {
    return <Navigate to={paths.auth.signIn.href(location.pathname + location.search)} replace />;
  }

  return (
    <div className="flex min-h-screen flex-col">
      <a
        href="#main"
        className="sr-only z-50 rounded-control bg-vellum px-3 py-2 font-semibold text-spruce focus:not-sr-only focus:fixed focus:top-2 focus:left-2"
      >
        Skip to content
      </a>
      <Header me={me.data} />
      <main id="main" tabIndex={-1} className="mx-auto w-full max-w-7xl flex-1 px-4 py-8 sm:px-6 lg:px-8">
        <Outlet />
      </main>
      <footer className="border-t border-rule py-4 text-center text-xs text-graphite">
        Counterpoise · times are shown in UTC
      </footer>
    </div>
  );
}

function Header({ me }: { me: Me }) {
  const signOut = useSignOut();
  const navigate = useNavigate();
  const items = topNavFor(me);
  const roles = rolesOf(me);

  return (
    <header className="border-b border-rule bg-vellum">
      <div className="h-1 bg-spruce" aria-hidden="true" />
      <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-x-8 gap-y-3 px-4 py-3 sm:px-6 lg:px-8">
        <Link to={paths.studies.list.href()} className="flex items-center gap-2.5 rounded-control">
          <BrandMark className="size-8" />
          <span className="text-lg font-bold tracking-tight text-ink">Counterpoise</span>
        </Link>
        <nav aria-label="Main" className="order-3 w-full sm:order-none sm:w-auto">
          <ul className="flex flex-wrap gap-1">
            {items.map((item) => (
              <li key={item}>
                <NavLink
                  to={navTargets[item].to}
                  className={({ isActive }) =>
                    cn(
                      'inline-flex h-9 items-center rounded-control px-3 text-sm font-semibold',
                      isActive
                        ? 'bg-spruce-wash text-spruce-deep'
                        : 'text-graphite hover:bg-paper hover:text-ink',
                    )
                  }
                >
                  {navTargets[item].label}
                </NavLink>
              </li>
            ))}
          </ul>
        </nav>
        <div className="ml-auto flex items-center gap-4">
          <div className="hidden text-right sm:block">
            <p className="text-sm font-semibold text-ink" data-testid="signed-in-user">
              {me.displayName}
            </p>
            <p className="text-xs text-graphite">
              {roles.map((r) => roleLabels[r]).join(' · ') || 'No role yet'}
            </p>
          </div>
          <Button
            variant="secondary"
            size="sm"
            busy={signOut.isPending}
            onClick={() =>
              signOut.mutate(undefined, {
                onSettled: () => navigate(paths.auth.signIn.href(), { replace: true }),
              })
            }
          >
            Sign out
          </Button>
        </div>
      </div>
    </header>
  );
}
