import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import type { SavedView } from '@shared/api/scenarios.ts';
import { createSavedView, deleteSavedView, savedViewsQuery, scenarioKeys } from './api.ts';

/** The person's saved views: apply one, save the current one under a name, delete one. */
export function SavedViews({ current, onApply }: { current: () => SavedView['state']; onApply: (view: SavedView) => void }) {
  const client = useQueryClient();
  const views = useQuery(savedViewsQuery());
  const [name, setName] = useState('');
  const [chosen, setChosen] = useState('');
  const refresh = () => client.invalidateQueries({ queryKey: scenarioKeys.views() });
  const save = useMutation({ mutationFn: createSavedView, onSuccess: () => (setName(''), refresh()) });
  const remove = useMutation({ mutationFn: deleteSavedView, onSuccess: () => (setChosen(''), refresh()) });
  const list = views.data ?? [];
  return (
    <div className="flex flex-wrap items-center gap-2 text-xs">
      <label className="flex items-center gap-1">
        <span className="text-ink-muted">View</span>
        <select
          className="rounded border border-line bg-surface-raised px-2 py-1"
          value={chosen}
          onChange={(e) => {
            setChosen(e.target.value);
            const view = list.find((v) => v.id === e.target.value);
            if (view) onApply(view);
          }}
        >
          <option value="">{list.length ? 'Choose a saved view…' : 'No saved views yet'}</option>
          {list.map((v) => (
            <option key={v.id} value={v.id}>
              {v.name}
            </option>
          ))}
        </select>
      </label>
      {chosen ? (
        <button type="button" className="rounded border border-line px-2 py-1 text-caution hover:bg-caution-soft/40" onClick={() => remove.mutate(chosen)}>
          Delete view
        </button>
      ) : null}
      <form
        className="flex items-center gap-1"
        onSubmit={(e) => {
          e.preventDefault();
          if (name.trim()) save.mutate({ name: name.trim(), state: current() });
        }}
      >
        <input
          aria-label="Name of the view to save"
          className="w-40 rounded border border-line bg-surface-raised px-2 py-1"
          placeholder="Save this view as…"
          value={name}
          onChange={(e) => setName(e.target.value)}
        />
        <button type="submit" disabled={!name.trim() || save.isPending} className="rounded bg-action px-2 py-1 text-white disabled:opacity-50">
          Save
        </button>
      </form>
      {save.isError || remove.isError ? <span role="alert" className="text-caution">{(save.error ?? remove.error)?.message}</span> : null}
    </div>
  );
}
