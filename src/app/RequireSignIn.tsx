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
export function RequireAccess({ method = 'GET', path, children }: { method?: HttpMethod; path: string; children: ReactNode }) {
  const me = useQuery(meQuery);
  if (!me.data) return null;
  return canCall(method, path, me.data.roles) ? children : <NotAllowedPage />;
}
