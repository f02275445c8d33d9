import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useId, useState } from 'react';
import { CALIBRATION_PARAMETER_INFO, type CalibrationParameters } from '@shared/calibration.ts';
import { Card } from '@/components/Page.tsx';
import { calibrationKeys, calibrationSetsQuery, createCalibrationSet, type CalibrationSetRow } from './api.ts';

type Key = keyof CalibrationParameters;
const KEYS = Object.keys(CALIBRATION_PARAMETER_INFO) as Key[];

/**
 * Calibration sets: every version with who made it, when and why; a set's parameters with
 * units and sources; a new version from an existing one (a version is never edited: signals
 * record the version they were computed with). New signals use the latest version.
 */
export function CalibrationSection() {
  const query = useQuery(calibrationSetsQuery);
  const [selected, setSelected] = useState<number | null>(null);
  const [editing, setEditing] = useState(false);
  if (query.isPending) return <Card title="Calibration sets">Loading…</Card>;
  if (query.isError)
    return (
      <Card title="Calibration sets">
        <p role="alert" className="text-caution">{query.error.message}</p>
      </Card>
    );
  const sets = query.data;
  const current = sets.find((s) => s.version === selected) ?? sets[0];
  return (
    <Card title="Calibration sets" className="lg:col-span-2">
      <p className="mb-2 text-xs text-ink-muted">New signals are computed with the latest version (v{sets[0]?.version}). Versions are never edited: a change makes a new version.</p>
      <div className="grid gap-4 xl:grid-cols-[minmax(0,2fr)_minmax(0,3fr)]">
        <VersionList sets={sets} current={current} onSelect={(v) => { setSelected(v); setEditing(false); }} />
        {current ? (
          editing ? (
            <NewVersionForm base={current} onDone={(v) => { setSelected(v); setEditing(false); }} onCancel={() => setEditing(false)} />
          ) : (
            <ParameterView set={current} onNew={() => setEditing(true)} />
          )
        ) : null}
      </div>
    </Card>
  );
}

function VersionList({ sets, current, onSelect }: { sets: CalibrationSetRow[]; current: CalibrationSetRow | undefined; onSelect: (v: number) => void }) {
  return (
    <table className="w-full text-left text-xs">
      <thead className="text-2xs uppercase tracking-wide text-ink-muted">
        <tr>
          <th className="py-1 font-medium">Version</th>
          <th className="py-1 font-medium">Made by, when</th>
          <th className="py-1 font-medium">Note</th>
        </tr>
      </thead>
      <tbody>
        {sets.map((s) => (
          <tr key={s.version} className={`border-t border-line align-top ${s.version === current?.version ? 'bg-surface-sunken' : ''}`}>
            <td className="py-1">
              <button type="button" className="num text-left underline-offset-2 hover:underline" aria-pressed={s.version === current?.version} onClick={() => onSelect(s.version)}>
                v{s.version} {s.name}
              </button>
              {s.basedOn ? <div className="text-2xs text-ink-muted">from v{s.basedOn}</div> : null}
            </td>
            <td className="py-1">
              {s.createdBy ?? 'Liftwise defaults'}
              <div className="num text-2xs text-ink-muted">{new Date(s.createdAt).toISOString().slice(0, 16).replace('T', ' ')} UTC</div>
            </td>
            <td className="py-1 text-ink-muted">{s.note ?? '–'}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

function show(value: unknown): string {
  return typeof value === 'number' ? String(Number(value.toPrecision(6))) : String(value);
}

function ParameterView({ set, onNew }: { set: CalibrationSetRow; onNew: () => void }) {
  return (
    <div className="flex flex-col gap-2">
      <div className="flex items-center justify-between">
        <p className="font-medium">v{set.version} {set.name}</p>
        <button type="button" onClick={onNew} className="rounded border border-line px-3 py-1 text-xs hover:bg-surface-sunken">
          New version from v{set.version}
        </button>
      </div>
      <table className="w-full text-left text-xs">
        <thead className="text-2xs uppercase tracking-wide text-ink-muted">
          <tr>
            <th className="py-1 font-medium">Parameter</th>
            <th className="py-1 text-right font-medium">Value</th>
            <th className="py-1 pl-2 font-medium">Unit</th>
          </tr>
        </thead>
        <tbody>
          {KEYS.map((k) => (
            <tr key={k} className="border-t border-line align-top">
              <td className="py-1" title={`${CALIBRATION_PARAMETER_INFO[k].description}. Source: ${CALIBRATION_PARAMETER_INFO[k].source}`}>
                <span className="num">{k}</span>
                <div className="text-2xs text-ink-muted">{CALIBRATION_PARAMETER_INFO[k].description}</div>
              </td>
              <td className="num py-1 text-right">{show(set.parameters[k])}</td>
              <td className="num py-1 pl-2">{CALIBRATION_PARAMETER_INFO[k].unit}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

function NewVersionForm({ base, onDone, onCancel }: { base: CalibrationSetRow; onDone: (version: number) => void; onCancel: () => void }) {
  const queryClient = useQueryClient();
  const [values, setValues] = useState<Record<Key, string>>(() => Object.fromEntries(KEYS.map((k) => [k, String(base.parameters[k])])) as Record<Key, string>);
  const [name, setName] = useState(base.name);
  const [note, setNote] = useState('');
  const idPrefix = useId();
  const create = useMutation({
    mutationFn: createCalibrationSet,
    onSuccess: async (set) => {
      await queryClient.invalidateQueries({ queryKey: calibrationKeys.all });
      onDone(set.version);
    },
  });
  const changes: Partial<Record<Key, unknown>> = {};
  const unreadable: Key[] = [];
  for (const k of KEYS) {
    const raw = values[k].trim();
    const original = base.parameters[k];
    if (typeof original === 'number') {
      const n = Number(raw);
      if (raw === '' || !Number.isFinite(n)) unreadable.push(k);
      else if (n !== original) changes[k] = n;
    } else if (raw !== original) changes[k] = raw;
  }
  const changed = Object.keys(changes).length;
  return (
    <form
      className="flex flex-col gap-2"
      onSubmit={(e) => {
        e.preventDefault();
        if (changed && !unreadable.length) create.mutate({ basedOn: base.version, name, note: note || undefined, parameters: changes as Partial<CalibrationParameters> });
      }}
    >
      <p className="font-medium">New version from v{base.version}</p>
      <label className="flex flex-col text-xs text-ink-muted">
        Name
        <input value={name} onChange={(e) => setName(e.target.value)} maxLength={200} className="mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink" />
      </label>
      <label className="flex flex-col text-xs text-ink-muted">
        Note (why this change)
        <input value={note} onChange={(e) => setNote(e.target.value)} maxLength={4000} className="mt-0.5 rounded border border-line bg-surface px-2 py-1 text-ink" />
      </label>
      <div className="grid grid-cols-1 gap-x-4 gap-y-1 sm:grid-cols-2">
        {KEYS.map((k) => {
          const info = CALIBRATION_PARAMETER_INFO[k];
          const id = `${idPrefix}-${k}`;
          const isChoice = k === 'rainSnowLevel';
          return (
            <div key={k} className="flex items-center justify-between gap-2 text-xs">
              <label htmlFor={id} className={`num ${k in changes ? 'font-semibold text-ascent-strong' : ''}`} title={info.description}>
                {k}
              </label>
              <span className="flex items-center gap-1">
                {isChoice ? (
                  <select id={id} value={values[k]} onChange={(e) => setValues({ ...values, [k]: e.target.value })} className="rounded border border-line bg-surface px-1 py-0.5 text-ink">
                    <option value="850hPa">850 hPa</option>
                    <option value="lowest">lowest level</option>
                  </select>
                ) : (
                  <input
                    id={id}
                    inputMode="decimal"
                    value={values[k]}
                    aria-invalid={unreadable.includes(k)}
                    onChange={(e) => setValues({ ...values, [k]: e.target.value })}
                    className="num w-20 rounded border border-line bg-surface px-1 py-0.5 text-right text-ink aria-[invalid=true]:border-caution"
                  />
                )}
                <span className="num w-16 text-ink-muted">{info.unit}</span>
              </span>
            </div>
          );
        })}
      </div>
      {unreadable.length ? <p role="alert" className="text-xs text-caution">Not a number: {unreadable.join(', ')}.</p> : null}
      {create.isError ? <p role="alert" className="text-xs text-caution">{create.error.message}</p> : null}
      <div className="flex items-center gap-3">
        <button type="submit" disabled={!changed || unreadable.length > 0 || create.isPending} className="rounded bg-action px-3 py-1.5 font-medium text-white hover:bg-action-hover disabled:opacity-50">
          {create.isPending ? 'Creating…' : `Create the new version (${changed} change${changed === 1 ? '' : 's'})`}
        </button>
        <button type="button" className="text-xs text-ink-muted underline" onClick={onCancel}>
          Cancel
        </button>
      </div>
    </form>
  );
}
