import { useQuery } from '@tanstack/react-query';
import { Link } from 'react-router-dom';
import { ROLE_LABELS } from '@shared/roles.ts';
import { EmptyState } from '@/components/Page.tsx';
import { meQuery } from '@/features/auth/api.ts';

export function NotAllowedPage() {
  const { data: me } = useQuery(meQuery);
  const roles = me?.roles.length ? me.roles.map((r) => ROLE_LABELS[r]).join(', ') : 'no role yet';
  return (
    <EmptyState icon="caution" title="Not available with your roles">
      This screen is for other roles; you are signed in as {me?.name ?? 'someone'} ({roles}). Roles come from your groups at the identity provider: ask
      an administrator if you need this one, then sign in again.{' '}
      <Link to="/runs" className="text-action underline">
        Go to Runs
      </Link>
    </EmptyState>
  );
}
