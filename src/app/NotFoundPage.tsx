import { Link } from 'react-router-dom';
import { EmptyState } from '@/components/Page.tsx';

export function NotFoundPage() {
  return (
    <EmptyState icon="caution" title="No such screen">
      This address does not lead anywhere in Liftwise.{' '}
      <Link to="/runs" className="text-action underline">
        Go to Runs
      </Link>
    </EmptyState>
  );
}
