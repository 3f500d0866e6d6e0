import { NavLink, Outlet, useNavigate } from 'react-router-dom';
import { Logo } from '../components/ui/Logo';
import { useLogout } from '../features/auth/api/logout';
import { useMe } from '../lib/api/me';
import { can } from '../lib/roles';
import { NAV } from './nav';

const ROLE_BADGE: Record<string, string> = {
  observer: 'bg-veil-soft text-night',
  curator: 'bg-amber/20 text-amber-deep',
  modeler: 'bg-ok/10 text-ok',
  admin: 'bg-bad/10 text-bad',
};

export function Layout() {
  const { data: me } = useMe();
  const logout = useLogout();
  const navigate = useNavigate();
  const items = NAV.filter((n) => can(me, n.roles));
  return (
    <div className="min-h-screen">
      <header className="bg-night text-white">
        <div className="mx-auto flex max-w-7xl items-center gap-4 px-6 py-3">
          <NavLink to="/" className="flex shrink-0 items-center gap-2.5">
            <Logo size={30} />
            <span className="text-lg font-semibold tracking-tight">Starveil</span>
          </NavLink>
          <nav aria-label="Main" className="flex flex-1 flex-wrap gap-0.5">
            {items.map((n) => (
              <NavLink
                key={n.to}
                to={n.to}
                end={n.to === '/'}
                className={({ isActive }) => `whitespace-nowrap rounded-md px-2 py-1.5 text-sm ${isActive ? 'bg-night-2 text-amber' : 'text-veil-soft/85 hover:bg-night-2 hover:text-white'}`}
              >
                {n.label}
              </NavLink>
            ))}
          </nav>
          {me && (
            <div className="flex shrink-0 items-center gap-3 text-sm">
              <span className="hidden whitespace-nowrap text-veil-soft/90 xl:inline">{me.name}</span>
              <span data-testid="role-badge" className={`rounded-full px-2 py-0.5 text-xs font-medium ${ROLE_BADGE[me.role]}`}>{me.role}</span>
              <button
                className="whitespace-nowrap rounded-md border border-night-2 px-2.5 py-1 text-xs text-veil-soft hover:bg-night-2"
                onClick={() => logout.mutate(undefined, { onSettled: () => navigate('/sign-in') })}
              >
                Sign out
              </button>
            </div>
          )}
        </div>
      </header>
      <main className="mx-auto max-w-7xl px-6 py-8">
        <Outlet />
      </main>
    </div>
  );
}
