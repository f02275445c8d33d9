/** Keys and a sealed chain shared by the seal tests (keys generated per run, nothing committed). */
import { generateKeyPairSync, type KeyObject } from 'node:crypto';
import type { JsonObject } from '../../../server/seal/canonical-json.ts';
import { keyIdOf, publicKeyPemOf } from '../../../server/seal/keys.ts';
import { sealSnapshot } from '../../../server/seal/seal.ts';
import type { SealedSnapshot } from '@shared/api/snapshots.ts';

export interface TestKey {
  privateKey: KeyObject;
  publicKey: KeyObject;
  publicKeyPem: string;
  keyId: string;
}

export function testKey(): TestKey {
  const { privateKey, publicKey } = generateKeyPairSync('ed25519');
  return { privateKey, publicKey, publicKeyPem: publicKeyPemOf(publicKey), keyId: keyIdOf(publicKey) };
}

/** Invented content in the shape the lead's seal service is expected to give. */
export function snapshotContent(variant = 0): JsonObject {
  return {
    filters: { regions: ['Nordvale Highlands', 'Fjellmark'], days: ['2026-12-02', '2026-12-03'], cluster: null },
    rows: [
      { region: 'Nordvale Highlands', day: '2026-12-02', precipitationMm: 12.4 + variant, inflowGWh: 3.25, p10: 2.1, p50: 3.2, p90: 4.75 },
      { region: 'Fjellmark', day: '2026-12-02', precipitationMm: 0.002, inflowGWh: -0, p10: 1e-7, p50: 1e21, p90: 4.5 },
      { region: 'Sørdal solar', day: '2026-12-03', cloudPercent: 63, solarGWh: 0.85, note: 'tåke i dalen \u20ac \ud83d\ude00' },
    ],
    summary: { weightedP50GWh: 7.3, rows: 3 },
    regimeCall: { id: 'c0ffee00-0000-4000-8000-000000000001', version: 4 },
    runs: [
      { id: '6f0e6c6a-0000-4000-8000-00000000000a', checksum: 'a'.repeat(64) },
      { id: '6f0e6c6a-0000-4000-8000-00000000000b', checksum: 'b'.repeat(64) },
    ],
    calibrationSet: { id: 'default', version: 2 },
    codeVersion: '0.1.0+abc1234',
    publishedAt: '2026-12-02T05:45:00.000Z',
  };
}

/** Three snapshots sealed one after the other. */
export function sealedChain(key: TestKey, length = 3): SealedSnapshot[] {
  const docs: SealedSnapshot[] = [];
  for (let i = 0; i < length; i++) {
    docs.push(
      sealSnapshot(
        {
          content: snapshotContent(i),
          previousHash: i === 0 ? null : docs[i - 1].hash,
          sealedAt: new Date(Date.UTC(2026, 11, 2, 6, i)),
          sealedBy: 'risk.ingrid',
        },
        key,
      ),
    );
  }
  return docs;
}

export { mulberry32 } from '../../../server/science/random.ts';
