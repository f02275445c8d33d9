import { useQuery } from '@tanstack/react-query';
import type { ReactNode } from 'react';
import { Navigate, useLocation } from 'react-router-dom';
import type { HttpMethod } from '@shared/permissions.ts';
import { canCall } from '@shared/permissions.ts';
import { meQuery } from '@/features/auth/api.ts';
import { NotAllowedPage } from './NotAllowedPage.tsx';

/** Sends signed-out people to /sign-in (and back here afterwards). */
export function RequireSignIn({ children }: { children: ReactNode }) {
  const me = useQuery(meQuery);
  const location = useLocation();
  if (me.isPending) {
    return (
      <div role="status" className="flex h-full items-center justify-center text-ink-muted">
        Checking your sign-in…
      </div>
    );
  }
  if (me.isError) {
    return (
      <div role="alert" className="flex h-full flex-col items-center justify-center gap-2 text-ink-muted">
        <p>{me.error.message}</p>
        <button type="button" className="rounded bg-action px-3 py-1.5 text-white" onClick={() => void me.refetch()}>
          Try again
        </button>
      </div>
    );
  }
  if (!me.data) {
    const here = `${location.pathname}${location.search}`;
    return <Navigate to={here === '/' ? '/sign-in' : `/sign-in?returnTo=${encodeURIComponent(here)}`} replace />;
  }
  return children;
}

/**
 * Shows a screen only to those the permission table lets call its main API route; the server
 * refuses the others anyway, this only spares them a screen of errors.
 */
export function RequireAccess({ anyOf, children }: { anyOf: readonly RouteRef[]; children: ReactNode }) {
  const me = useQuery(meQuery);
  if (!me.data) return null;
  const roles = me.data.roles;
  return anyOf.some((r) => canCall(r.method, r.path, roles)) ? children : <NotAllowedPage />;
}

/** An API route a screen is for: its people are those who may call at least one of them. */
export interface RouteRef {
  method: HttpMethod;
  path: string;
}

/** The Admin screen serves admins (regions, roles, subscriptions) and meteorologists (calibration sets). */
export const ADMIN_SCREEN_ROUTES: readonly RouteRef[] = [
  { method: 'GET', path: '/api/admin/role-mappings' },
  { method: 'POST', path: '/api/calibration-sets' },
];
