import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { useMemo, useState, type FormEvent } from 'react';
import { EChart } from '@/components/charts/EChart.tsx';
import { Card } from '@/components/Page.tsx';
import { chartFrame, symmetricRange, useDarkMode } from '@/lib/chart-theme.ts';
import { sectionQuery } from './api.ts';
import { buildSectionOption } from './options.ts';
import type { ViewState } from './view-state.ts';

export interface SectionLine {
  from: { lat: number; lon: number };
  to: { lat: number; lon: number };
}

const fmt = (p: { lat: number; lon: number }) => `${p.lat}, ${p.lon}`;

function parsePoint(text: string): { lat: number; lon: number } | null {
  const m = /^\s*(-?\d+(?:\.\d+)?)\s*[, ]\s*(-?\d+(?:\.\d+)?)\s*$/.exec(text);
  return m ? { lat: Number(m[1]), lon: Number(m[2]) } : null;
}

/** The vertical cross-section along the drawn (or typed) line, same colours as the map. */
export function SectionCard({ runId, view, line, onLine }: { runId: string; view: ViewState; line: SectionLine | null; onLine: (l: SectionLine | null) => void }) {
  const dark = useDarkMode();
  const section = useQuery({
    ...sectionQuery(runId, { member: view.member, step: view.step, part: view.part, from: line?.from ?? { lat: 0, lon: 0 }, to: line?.to ?? { lat: 0, lon: 0 }, points: 80 }),
    enabled: line !== null,
    placeholderData: keepPreviousData,
  });
  const option = useMemo(() => {
    if (!section.data) return null;
    return buildSectionOption(section.data, symmetricRange(section.data.values.flat()), chartFrame(dark), dark);
  }, [section.data, dark]);

  return (
    <Card title="Vertical cross-section">
      <LineForm key={line ? `${fmt(line.from)}|${fmt(line.to)}` : 'none'} line={line} onLine={onLine} />
      {!line ? (
        <p className="py-10 text-center text-ink-muted">Click two points on the ascent map, or type the two ends above, to see omega in the vertical along that line (great circle).</p>
      ) : section.isError ? (
        <p role="alert" className="text-caution">
          The section cannot be shown: {section.error.message}
        </p>
      ) : option && section.data ? (
        <>
          <div className="h-96" data-testid="section-chart">
            <EChart option={option} label="Cross-section of omega: distance along the line in km against pressure in hPa" className="h-full w-full" />
          </div>
          <p className="num mt-1 text-2xs text-ink-muted">
            {fmt(line.from)} → {fmt(line.to)}, {Math.round(section.data.distanceKm[section.data.distanceKm.length - 1])} km along the great circle; omega in Pa/s (×36 for hPa/h), teal = ascent.
          </p>
        </>
      ) : (
        <p className="py-10 text-center text-ink-muted">Loading the section…</p>
      )}
    </Card>
  );
}

/** The two ends typed by hand (keyboard users, exact coordinates); filled in from map clicks. */
function LineForm({ line, onLine }: { line: SectionLine | null; onLine: (l: SectionLine | null) => void }) {
  const [fromText, setFromText] = useState(line ? fmt(line.from) : '');
  const [toText, setToText] = useState(line ? fmt(line.to) : '');
  const [formError, setFormError] = useState<string | null>(null);
  const submit = (e: FormEvent) => {
    e.preventDefault();
    const from = parsePoint(fromText);
    const to = parsePoint(toText);
    if (!from || !to) {
      setFormError('Type each end as "latitude, longitude" in degrees, e.g. 60.5, 10.');
      return;
    }
    setFormError(null);
    onLine({ from, to });
  };
  return (
    <>
      <form onSubmit={submit} className="mb-2 flex flex-wrap items-end gap-2 text-xs" aria-label="Cross-section line">
        <label className="flex flex-col gap-0.5 text-ink-muted">
          From (lat, lon)
          <input className="num w-32 rounded border border-line bg-surface px-1.5 py-0.5 text-ink" value={fromText} onChange={(e) => setFromText(e.target.value)} placeholder="58, 5" />
        </label>
        <label className="flex flex-col gap-0.5 text-ink-muted">
          To (lat, lon)
          <input className="num w-32 rounded border border-line bg-surface px-1.5 py-0.5 text-ink" value={toText} onChange={(e) => setToText(e.target.value)} placeholder="64, 25" />
        </label>
        <button type="submit" className="rounded bg-action px-2 py-1 text-white hover:bg-action-hover">
          Draw section
        </button>
        {line ? (
          <button type="button" className="rounded border border-line px-2 py-1 hover:bg-surface-sunken" onClick={() => onLine(null)}>
            Clear
          </button>
        ) : null}
      </form>
      {formError ? (
        <p role="alert" className="mb-2 text-xs text-caution">
          {formError}
        </p>
      ) : null}
    </>
  );
}
