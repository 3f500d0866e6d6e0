import type { ReactNode } from 'react';
import { Navigate, useLocation } from 'react-router-dom';
import { useMe } from '../lib/api/me';
import { can, type Role } from '../lib/roles';
import { Notice } from '../components/ui/primitives';

export function RequireRole({ roles, children }: { roles: readonly Role[] | 'signed-in'; children: ReactNode }) {
  const me = useMe();
  const location = useLocation();
  if (me.isPending) return <div className="p-8 text-sm text-muted">Loading…</div>;
  if (me.isError) return <div className="p-8"><Notice tone="bad">{me.error.message}</Notice></div>;
  if (!me.data) return <Navigate to="/sign-in" replace state={{ from: location.pathname + location.search }} />;
  if (!can(me.data, roles)) return <Notice tone="bad">Your role ({me.data.role}) may not open this page.</Notice>;
  return <>{children}</>;
}
