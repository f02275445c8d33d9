import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useId, useMemo, useState } from 'react';
import { validateRegions, type RegionGeometry, type RegionIssue, type RegionProperties } from '@shared/regions.ts';
import { Card, EmptyState } from '@/components/Page.tsx';
import { formatValue } from '@/lib/format.ts';
import { regionKeys, regionsQuery, RegionsRefused, saveRegions, type RegionRow } from './api.ts';

/**
 * Regions: the active hydro catchments and solar zones, a map preview, and the upload that
 * replaces them (a .geojson file or pasted text, checked here with the same rules the server
 * applies, then sent). Problems are listed per feature in plain words.
 */
export function RegionsSection() {
  const query = useQuery(regionsQuery);
  const queryClient = useQueryClient();
  const [text, setText] = useState('');
  const save = useMutation({
    mutationFn: saveRegions,
    onSuccess: (regions) => {
      queryClient.setQueryData(regionKeys.all, regions);
      setText('');
    },
  });
  const draft = useMemo(() => parseDraft(text), [text]);
  const issues = draft.kind === 'invalid' ? draft.issues : save.error instanceof RegionsRefused ? save.error.issues : [];
  const previewFeatures: PreviewFeature[] =
    draft.kind === 'valid'
      ? draft.features
      : (query.data ?? []).map((r) => ({ id: r.id, name: r.name, kind: r.kind, geometry: r.geometry }));

  const onFile = async (file: File | undefined) => {
    if (!file) return;
    save.reset();
    setText(await file.text());
  };

  return (
    <Card title="Regions" className="lg:col-span-2">
      <p className="mb-2 text-xs text-ink-muted">
        Hydro catchments and solar zones with their plant parameters (GeoJSON, WGS84; format in docs/regions.md). Uploading replaces the whole active set; earlier signal rows keep their regions.
      </p>
      <div className="grid gap-4 xl:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
        <div className="flex flex-col gap-3">
          {query.isPending ? <p role="status">Loading…</p> : null}
          {query.isError ? <p role="alert" className="text-caution">{query.error.message}</p> : null}
          {query.data ? <RegionTable regions={query.data} /> : null}
          <UploadForm
            text={text}
            onText={(value) => {
              save.reset();
              setText(value);
            }}
            onFile={onFile}
            canSend={draft.kind === 'valid' && !save.isPending}
            pending={save.isPending}
            onSend={() => {
              if (draft.kind === 'valid') save.mutate(draft.value);
            }}
          />
          {draft.kind === 'valid' ? <p className="text-xs text-ink-muted">The file is valid: {draft.features.length} region(s), shown on the map. Nothing changes until you replace.</p> : null}
          {issues.length ? <IssueList issues={issues} /> : null}
          {save.isError && !(save.error instanceof RegionsRefused) ? <p role="alert" className="text-xs text-caution">{save.error.message}</p> : null}
          {save.isSuccess ? <p role="status" className="text-xs text-ink-muted">Regions replaced.</p> : null}
        </div>
        <RegionMap features={previewFeatures} caption={draft.kind === 'valid' ? 'Preview of the file (not saved yet)' : 'Active regions'} />
      </div>
    </Card>
  );
}

type Draft =
  | { kind: 'empty' }
  | { kind: 'invalid'; issues: RegionIssue[] }
  | { kind: 'valid'; value: unknown; features: PreviewFeature[] };

function parseDraft(text: string): Draft {
  if (!text.trim()) return { kind: 'empty' };
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (err) {
    return { kind: 'invalid', issues: [{ featureIndex: null, id: null, message: `The text is not valid JSON: ${(err as Error).message}` }] };
  }
  const result = validateRegions(value);
  if (!result.ok) return { kind: 'invalid', issues: result.issues };
  return {
    kind: 'valid',
    value,
    features: result.collection.features.map((f) => ({ id: f.properties.id, name: f.properties.name, kind: f.properties.kind, geometry: f.geometry })),
  };
}

function UploadForm(props: {
  text: string; onText: (v: string) => void; onFile: (f: File | undefined) => void; canSend: boolean; pending: boolean; onSend: () => void;
}) {
  const fileId = useId();
  const textId = useId();
  return (
    <form
      className="flex flex-col gap-2"
      onSubmit={(e) => {
        e.preventDefault();
        props.onSend();
      }}
    >
      <label htmlFor={fileId} className="text-xs text-ink-muted">
        Upload a .geojson file
      </label>
      <input id={fileId} type="file" accept=".geojson,.json,application/geo+json,application/json" onChange={(e) => props.onFile(e.target.files?.[0])} className="text-xs" />
      <label htmlFor={textId} className="text-xs text-ink-muted">
        or paste the GeoJSON
      </label>
      <textarea
        id={textId}
        value={props.text}
        onChange={(e) => props.onText(e.target.value)}
        rows={5}
        spellCheck={false}
        placeholder='{"type": "FeatureCollection", "features": [ … ]}'
        className="num rounded border border-line bg-surface px-2 py-1 text-xs text-ink"
      />
      <div className="flex items-center gap-3">
        <button type="submit" disabled={!props.canSend} className="rounded bg-action px-3 py-1.5 font-medium text-white hover:bg-action-hover disabled:opacity-50">
          {props.pending ? 'Replacing…' : 'Replace regions'}
        </button>
        {props.text ? (
          <button type="button" className="text-xs text-ink-muted underline" onClick={() => props.onText('')}>
            Clear
          </button>
        ) : null}
      </div>
    </form>
  );
}

function IssueList({ issues }: { issues: RegionIssue[] }) {
  return (
    <div role="alert" className="rounded border border-caution/40 px-3 py-2 text-xs text-caution">
      <p className="mb-1 font-medium">The file was not accepted ({issues.length} problem{issues.length === 1 ? '' : 's'}); nothing was changed:</p>
      <ul className="list-disc pl-4">
        {issues.map((i, k) => (
          <li key={k}>{i.message}</li>
        ))}
      </ul>
    </div>
  );
}

/** The key plant parameters of a region, each with its unit. */
function keyParameters(p: RegionProperties): string {
  if (p.kind === 'hydro') {
    const parts = [`head ${formatValue(p.headM, '', 0)} m`, `efficiency ${formatValue(p.efficiency * 100, '%', 0)}`, `runoff coeff. ${formatValue(p.runoffCoefficient, '', 2)}`, `k ${formatValue(p.recessionDays, '', 0)} d`];
    if (p.snowDdfMmPerDayK !== undefined) parts.push(`DDF ${formatValue(p.snowDdfMmPerDayK, '', 1)} mm/(d·K)`);
    if (p.meltThresholdC !== undefined) parts.push(`T0 ${formatValue(p.meltThresholdC, '', 1)} °C`);
    return parts.join(', ');
  }
  const parts = [`${formatValue(p.capacityMw, '', 0)} MW`, `tilt ${formatValue(p.tiltDeg, '', 0)}°`, `azimuth ${formatValue(p.azimuthDeg, '', 0)}°`, `losses ${formatValue(p.lossesPct, '%', 0)}`];
  if (p.gammaPerK !== undefined) parts.push(`γ ${formatValue(p.gammaPerK * 100, '', 2)} %/K`);
  return parts.join(', ');
}

function RegionTable({ regions }: { regions: RegionRow[] }) {
  if (regions.length === 0) {
    return (
      <EmptyState icon="admin" title="No regions loaded">
        Upload the hydro catchments and solar zones (GeoJSON with plant parameters) below; they are listed here with a map preview.
      </EmptyState>
    );
  }
  return (
    <table className="w-full text-left text-xs">
      <thead className="text-2xs uppercase tracking-wide text-ink-muted">
        <tr>
          <th className="py-1 font-medium">Region</th>
          <th className="py-1 font-medium">Kind</th>
          <th className="py-1 text-right font-medium">Area</th>
          <th className="py-1 pl-3 font-medium">Parameters</th>
        </tr>
      </thead>
      <tbody>
        {regions.map((r) => (
          <tr key={r.id} className="border-t border-line align-top">
            <td className="py-1">
              {r.name}
              <div className="num text-2xs text-ink-muted">{r.id}</div>
            </td>
            <td className="py-1">{r.kind === 'hydro' ? 'Hydro catchment' : 'Solar zone'}</td>
            <td className="num py-1 text-right">{formatValue(r.areaKm2, '', 0)} km²</td>
            <td className="num py-1 pl-3">{keyParameters(r.properties)}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

// ---------------------------------------------------------------------------------------------
// Map preview: equirectangular projection with a graticule, drawn as SVG.
// ---------------------------------------------------------------------------------------------

interface PreviewFeature {
  id: string;
  name: string;
  kind: 'hydro' | 'solar';
  geometry: RegionGeometry;
}

const MAP_WIDTH = 480;

function polygonsOf(g: RegionGeometry): number[][][][] {
  return g.type === 'Polygon' ? [g.coordinates] : g.coordinates;
}

/** Graticule step (degrees) giving about 4 to 8 lines across a span. */
function graticuleStep(span: number): number {
  for (const s of [0.5, 1, 2, 5, 10, 15, 30]) if (span / s <= 8) return s;
  return 45;
}

function RegionMap({ features, caption }: { features: PreviewFeature[]; caption: string }) {
  if (features.length === 0) return <p className="text-xs text-ink-muted">The map shows the regions once there are some.</p>;
  let west = Infinity, east = -Infinity, south = Infinity, north = -Infinity;
  for (const f of features) for (const poly of polygonsOf(f.geometry)) for (const [lon, lat] of poly[0] ?? []) {
    west = Math.min(west, lon); east = Math.max(east, lon); south = Math.min(south, lat); north = Math.max(north, lat);
  }
  const pad = Math.max(0.5, 0.08 * Math.max(east - west, north - south));
  west -= pad; east += pad; south -= pad; north += pad;
  // Equirectangular with the standard parallel at the centre, so shapes look right at high latitude.
  const kx = Math.cos((((south + north) / 2) * Math.PI) / 180);
  const scale = MAP_WIDTH / ((east - west) * kx);
  const height = Math.max(120, (north - south) * scale);
  const x = (lon: number) => (lon - west) * kx * scale;
  const y = (lat: number) => (north - lat) * scale;
  const step = graticuleStep(Math.max(east - west, north - south));
  const lons: number[] = [], lats: number[] = [];
  for (let v = Math.ceil(west / step) * step; v <= east; v += step) lons.push(v);
  for (let v = Math.ceil(south / step) * step; v <= north; v += step) lats.push(v);
  const path = (g: RegionGeometry) =>
    polygonsOf(g).map((poly) => poly.map((ring) => ring.map(([lon, lat], i) => `${i ? 'L' : 'M'}${x(lon).toFixed(1)},${y(lat).toFixed(1)}`).join('') + 'Z').join('')).join('');
  const deg = (v: number, pos: string, neg: string) => `${Math.abs(v)}°${v >= 0 ? pos : neg}`;
  return (
    <figure className="flex flex-col gap-1">
      <svg viewBox={`-28 -4 ${MAP_WIDTH + 32} ${height + 20}`} role="img" aria-label={`${caption}: map of ${features.length} regions`} className="w-full rounded border border-line bg-surface">
        <g className="stroke-slate-300 dark:stroke-slate-600" strokeWidth={0.5}>
          {lons.map((v) => <line key={`x${v}`} x1={x(v)} x2={x(v)} y1={0} y2={height} />)}
          {lats.map((v) => <line key={`y${v}`} x1={0} x2={MAP_WIDTH} y1={y(v)} y2={y(v)} />)}
        </g>
        <g className="fill-slate-500 text-[9px]">
          {lons.map((v) => <text key={`tx${v}`} x={x(v)} y={height + 12} textAnchor="middle">{deg(v, 'E', 'W')}</text>)}
          {lats.map((v) => <text key={`ty${v}`} x={-3} y={y(v) + 3} textAnchor="end">{deg(v, 'N', 'S')}</text>)}
        </g>
        {features.map((f) => (
          <path
            key={f.id}
            d={path(f.geometry)}
            fillRule="evenodd"
            strokeWidth={1}
            className={f.kind === 'hydro' ? 'fill-ascent-soft/70 stroke-ascent-strong' : 'fill-descent-soft/70 stroke-descent-strong'}
          >
            <title>{`${f.name} (${f.kind === 'hydro' ? 'hydro catchment' : 'solar zone'})`}</title>
          </path>
        ))}
      </svg>
      <figcaption className="flex gap-3 text-2xs text-ink-muted">
        <span>{caption}</span>
        <span><span className="mr-1 inline-block h-2 w-2 bg-ascent-strong" aria-hidden />hydro catchment</span>
        <span><span className="mr-1 inline-block h-2 w-2 bg-descent-strong" aria-hidden />solar zone</span>
        <span>equirectangular, graticule every {step}°</span>
      </figcaption>
    </figure>
  );
}
