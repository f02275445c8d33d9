/**
 * Who is signed in, for every feature: the /api/me query (which also hands the CSRF token to the
 * fetch client) and `useCan`, which reads the shared permission table so that a screen hides
 * what the person's roles cannot do. The server remains the guard.
 */
import { queryOptions, useQuery } from '@tanstack/react-query';
import { meSchema, type Me } from '@shared/api/auth.ts';
import { canCall, type HttpMethod } from '@shared/permissions.ts';
import { ApiError, apiFetch, setCsrfToken } from './api.ts';

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

/** Whether the signed-in person may call this API route (false while loading or signed out). */
export function useCan(method: HttpMethod, path: string): boolean {
  const me = useQuery(meQuery);
  return me.data ? canCall(method, path, me.data.roles) : false;
}
