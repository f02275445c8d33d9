import { useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { CAUTIONS } from '@shared/cautions.ts';
import { canCall } from '@shared/permissions.ts';
import { Card, CautionNote, EmptyState, PageHeader } from '@/components/Page.tsx';
import { publicKeyQuery, rolesQuery } from './api.ts';
import { AuditTrail, ChainStatusCard } from './AuditTrail.tsx';
import { ComparePanel } from './ComparePanel.tsx';
import { SealPanel } from './SealPanel.tsx';
import { SnapshotList } from './SnapshotList.tsx';

function PublicKeyCard() {
  const key = useQuery(publicKeyQuery);
  return (
    <Card title="Seal key">
      {key.isError ? (
        <p role="alert" className="text-caution">{key.error.message}</p>
      ) : !key.data ? (
        <p className="text-ink-muted">Loading…</p>
      ) : (
        <div className="flex flex-col gap-1 text-xs">
          <p>
            {key.data.algorithm} key <span className="num font-medium">{key.data.keyId}</span>. Check an exported snapshot offline with{' '}
            <code className="num">npm run liftwise -- verify-snapshot FILE.json --public-key KEY.pem</code>, KEY.pem holding:
          </p>
          <pre className="num overflow-x-auto rounded bg-surface-sunken p-2 text-2xs">{key.data.publicKey}</pre>
        </div>
      )}
    </Card>
  );
}

export function SnapshotsPage() {
  const roles = useQuery(rolesQuery);
  const [picked, setPicked] = useState<number[]>([]);
  const canSeal = roles.data ? canCall('POST', '/api/snapshots', roles.data) : false;
  const canRead = roles.data ? canCall('GET', '/api/snapshots', roles.data) : false;
  // Ticking a third snapshot replaces the older pick, so two are always compared.
  const pick = (id: number) => setPicked((p) => (p.includes(id) ? p.filter((x) => x !== id) : [...p, id].slice(-2)));
  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Snapshots" subtitle="Sealed, verifiable records of what the desk published, and the audit trail." />
      <CautionNote>{CAUTIONS.join(' ')}</CautionNote>
      {roles.isError ? (
        <p role="alert" className="text-caution">
          {roles.error.message}
        </p>
      ) : null}
      {canSeal ? <SealPanel /> : null}
      {roles.data && !canRead ? (
        <EmptyState icon="seal" title="Snapshots are for risk managers and admins">
          Your roles do not include reading sealed snapshots or the audit trail.
        </EmptyState>
      ) : null}
      {canRead ? (
        <>
          <ChainStatusCard />
          <SnapshotList picked={picked} onPick={pick} />
          {picked.length === 2 ? <ComparePanel ids={[picked[0], picked[1]]} /> : null}
          <AuditTrail />
        </>
      ) : null}
      {roles.data ? <PublicKeyCard /> : null}
    </div>
  );
}
