import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { useNavigate } from 'react-router-dom';
import { ROLE_LABELS } from '@shared/roles.ts';
import { meQuery, signOut } from './api.ts';

/** Top-bar menu: who is signed in, with which roles, and sign-out (POST with the CSRF token). */
export function UserMenu() {
  const { data: me } = useQuery(meQuery);
  const [open, setOpen] = useState(false);
  const queryClient = useQueryClient();
  const navigate = useNavigate();
  const signOutMutation = useMutation({
    mutationFn: signOut,
    onSuccess: () => {
      queryClient.clear();
      navigate('/sign-in', { replace: true });
    },
  });
  if (!me) return null;
  const roles = me.roles.length ? me.roles.map((r) => ROLE_LABELS[r]).join(', ') : 'no role';
  return (
    <div className="relative">
      <button
        type="button"
        aria-haspopup="true"
        aria-expanded={open}
        onClick={() => setOpen((v) => !v)}
        className="flex items-center gap-2 rounded px-2 py-1 text-left hover:bg-surface-sunken"
      >
        <span className="flex h-6 w-6 items-center justify-center rounded-full bg-ascent-strong text-2xs font-semibold text-white" aria-hidden>
          {me.name
            .split(/\s+/)
            .map((part) => part[0])
            .slice(0, 2)
            .join('')}
        </span>
        <span className="leading-tight">
          <span className="block text-xs font-medium">{me.name}</span>
          <span className="block text-2xs text-ink-muted">{roles}</span>
        </span>
      </button>
      {open ? (
        <div role="menu" className="absolute right-0 z-20 mt-1 w-56 rounded-md border border-line bg-surface-raised p-2 shadow-lg">
          <p className="px-2 text-xs text-ink-muted">{me.email}</p>
          <button
            type="button"
            role="menuitem"
            disabled={signOutMutation.isPending}
            onClick={() => signOutMutation.mutate()}
            className="mt-2 w-full rounded px-2 py-1.5 text-left hover:bg-surface-sunken"
          >
            {signOutMutation.isPending ? 'Signing out…' : 'Sign out'}
          </button>
          {signOutMutation.isError ? <p className="px-2 text-xs text-caution">{signOutMutation.error.message}</p> : null}
        </div>
      ) : null}
    </div>
  );
}
