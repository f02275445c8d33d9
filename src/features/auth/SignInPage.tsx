import { useQuery } from '@tanstack/react-query';
import { Navigate, useSearchParams } from 'react-router-dom';
import { appInfoQuery } from '@/app/app-info.ts';
import { meQuery, safeReturnPath } from './api.ts';

/** One button to the organisation's identity provider; in development, a word about the local one. */
export function SignInPage() {
  const [params] = useSearchParams();
  const returnTo = safeReturnPath(params.get('returnTo'));
  const me = useQuery(meQuery);
  const info = useQuery(appInfoQuery);
  if (me.data) return <Navigate to={returnTo ?? '/'} replace />;
  const href = returnTo ? `/auth/saml/login?RelayState=${encodeURIComponent(returnTo)}` : '/auth/saml/login';
  return (
    <div className="flex h-full items-center justify-center bg-surface">
      <div className="w-80 rounded-md border border-line bg-surface-raised p-6 text-center">
        <p className="text-lg font-semibold tracking-tight">Liftwise</p>
        <p className="mt-1 text-ink-muted">Sign in with your organisation's account.</p>
        <a
          href={href}
          className="mt-5 block rounded bg-action px-3 py-2 font-medium text-white hover:bg-action-hover focus-visible:outline-offset-2"
        >
          Sign in
        </a>
        {info.data?.devTools ? (
          <p className="mt-4 rounded border border-dashed border-line px-2 py-1.5 text-left text-xs text-ink-muted">
            Development: the button opens the local identity provider, which lists demo people of each role (and lets you make up one with chosen
            groups).
          </p>
        ) : null}
      </div>
    </div>
  );
}
