/** The auth feature's HTTP layer: who is signed in (and the CSRF token), sign-out. */
import { queryOptions } from '@tanstack/react-query';
import { meSchema, type Me } from '@shared/api/auth.ts';
import { ApiError, apiFetch, setCsrfToken } from '@/lib/api.ts';

export const authKeys = {
  all: ['auth'] as const,
  me: () => [...authKeys.all, 'me'] as const,
};

/** The signed-in person, or null when signed out. Hands the CSRF token to the fetch client. */
export const meQuery = queryOptions({
  queryKey: authKeys.me(),
  queryFn: async (): Promise<Me | null> => {
    try {
      const me = meSchema.parse(await apiFetch('/api/me'));
      setCsrfToken(me.csrfToken);
      return me;
    } catch (err) {
      if (err instanceof ApiError && err.status === 401) {
        setCsrfToken(null);
        return null;
      }
      throw err;
    }
  },
  staleTime: 60_000,
});

export async function signOut(): Promise<void> {
  await apiFetch<void>('/auth/logout', { method: 'POST' });
  setCsrfToken(null);
}

/** Only a path on this site may be carried through sign-in (the server checks it again). */
export function safeReturnPath(value: string | null): string | null {
  return value && /^\/(?![/\\])[\w\-./?=&%#~+]*$/.test(value) && !value.startsWith('/sign-in') ? value : null;
}
