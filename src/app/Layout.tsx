import { useQuery } from '@tanstack/react-query';
import { NavLink, Outlet } from 'react-router-dom';
import { canCall } from '@shared/permissions.ts';
import { Icon, type IconName } from '@/components/Icon.tsx';
import { meQuery } from '@/features/auth/api.ts';
import { UserMenu } from '@/features/auth/UserMenu.tsx';
import { appInfoQuery } from './app-info.ts';
import { ADMIN_SCREEN_ROUTES, type RouteRef } from './RequireSignIn.tsx';
import { useTheme } from './theme.tsx';

interface NavItem {
  to: string;
  label: string;
  icon: IconName;
  devOnly?: boolean;
  /** shown only to those the permission table lets read this API route */
  /** shown to those who may call at least one of these API routes */
  needs?: readonly RouteRef[];
}

export const NAV_ITEMS: NavItem[] = [
  { to: '/runs', label: 'Runs', icon: 'runs' },
  { to: '/scenarios', label: 'Scenarios', icon: 'scenarios' },
  { to: '/regime-calls', label: 'Regime calls', icon: 'call' },
  { to: '/snapshots', label: 'Snapshots', icon: 'seal' },
  { to: '/admin', label: 'Admin', icon: 'admin', needs: ADMIN_SCREEN_ROUTES },
  { to: '/outbox', label: 'Outbox', icon: 'outbox', devOnly: true },
];

function Mark() {
  return (
    <div className="flex items-center gap-2 px-3 py-3">
      <svg viewBox="0 0 32 32" className="h-7 w-7" aria-hidden>
        <rect width="32" height="32" rx="7" fill="#0E7C7B" />
        <path d="M7 22c4 0 5-12 9-12s5 12 9 12" fill="none" stroke="#F6DDB5" strokeWidth="3" strokeLinecap="round" />
        <path d="M16 6v8m-3-3 3-3 3 3" fill="none" stroke="#fff" strokeWidth="2.2" strokeLinecap="round" strokeLinejoin="round" />
      </svg>
      <span className="text-[0.95rem] font-semibold tracking-tight">Liftwise</span>
    </div>
  );
}

export function Layout() {
  const { theme, toggle } = useTheme();
  const info = useQuery(appInfoQuery);
  const me = useQuery(meQuery);
  const roles = me.data?.roles ?? null;
  const items = NAV_ITEMS.filter((item) => (!item.devOnly || info.data?.devTools) && (!item.needs || item.needs.some((r) => canCall(r.method, r.path, roles))));
  return (
    <div className="flex h-full">
      <nav aria-label="Screens" className="flex w-48 shrink-0 flex-col border-r border-line bg-surface-raised">
        <Mark />
        <ul className="flex flex-1 flex-col gap-0.5 px-2">
          {items.map((item) => (
            <li key={item.to}>
              <NavLink
                to={item.to}
                className={({ isActive }) =>
                  `flex items-center gap-2 rounded px-2 py-1.5 ${
                    isActive ? 'bg-ascent-strong/10 font-medium text-ascent-strong dark:text-ascent-mid' : 'text-ink-muted hover:bg-surface-sunken hover:text-ink'
                  }`
                }
              >
                <Icon name={item.icon} />
                {item.label}
              </NavLink>
            </li>
          ))}
        </ul>
        <div className="border-t border-line px-3 py-2 text-2xs text-ink-faint">
          <span className="num">{info.data ? `v${info.data.version}` : '\u00a0'}</span>
          {info.data && info.data.environment !== 'production' ? <span className="ml-1 uppercase">· {info.data.environment}</span> : null}
        </div>
      </nav>
      <div className="flex min-w-0 flex-1 flex-col">
        <div className="flex h-11 shrink-0 items-center justify-between gap-3 border-b border-line bg-surface-raised px-4" id="top-bar">
          <div id="top-bar-context" className="flex min-w-0 items-center gap-3" />
          <div className="flex items-center gap-2">
          <button
            type="button"
            onClick={toggle}
            className="flex items-center gap-1.5 rounded px-2 py-1 text-ink-muted hover:bg-surface-sunken hover:text-ink"
            aria-label={theme === 'dark' ? 'Switch to light theme' : 'Switch to dark theme'}
          >
            <Icon name={theme === 'dark' ? 'sun' : 'moon'} />
            <span className="text-xs">{theme === 'dark' ? 'Light' : 'Dark'}</span>
          </button>
          <UserMenu />
          </div>
        </div>
        <main className="min-h-0 flex-1 overflow-auto p-4">
          <Outlet />
        </main>
      </div>
    </div>
  );
}
