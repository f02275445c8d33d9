/** The auth feature's HTTP layer: who is signed in (and the CSRF token), sign-out. */
import { apiFetch, setCsrfToken } from '@/lib/api.ts';

export { authKeys, meQuery } from '@/lib/session.ts';

export async function signOut(): Promise<void> {
  await apiFetch<void>('/auth/logout', { method: 'POST' });
  setCsrfToken(null);
}

/** Only a path on this site may be carried through sign-in (the server checks it again). */
export function safeReturnPath(value: string | null): string | null {
  return value && /^\/(?![/\\])[\w\-./?=&%#~+]*$/.test(value) && !value.startsWith('/sign-in') ? value : null;
}
