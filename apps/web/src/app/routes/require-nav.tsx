import type { ReactNode } from 'react';
import { ForbiddenState } from '../../components/ui/states.js';
import { useMe } from '../../features/auth/api/get-me.js';
import { topNavFor, type TopNavItem } from '../../lib/authorization.js';

/** Page-level gate matching the navigation: what is not offered is not rendered either. */
export function RequireNav({ item, children }: { item: TopNavItem; children: ReactNode }) {
  const me = useMe();
  if (!me.data) return null;
  if (!topNavFor(me.data).includes(item)) {
    return (
      <ForbiddenState>
        Your role does not include this page. Ask an administrator if you need it.
      </ForbiddenState>
    );
  }
  return <>{children}</>;
}
