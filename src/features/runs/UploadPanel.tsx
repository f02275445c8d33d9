import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useRef, useState, type DragEvent } from 'react';
import { Link } from 'react-router-dom';
import type { UploadResult } from '@shared/api/runs.ts';
import { Icon } from '@/components/Icon.tsx';
import { ProgressBar } from '@/components/RunState.tsx';
import { ApiError } from '@/lib/api.ts';
import { formatBytes } from '@/lib/format.ts';
import { runKeys, uploadRun } from './api.ts';

/** Drag a file in or pick one; the bar follows the bytes, the answer is said in plain words. */
export function UploadPanel() {
  const queryClient = useQueryClient();
  const input = useRef<HTMLInputElement>(null);
  const [dragging, setDragging] = useState(false);
  const [fraction, setFraction] = useState(0);
  const [current, setCurrent] = useState<File | null>(null);
  const [model, setModel] = useState('');
  const upload = useMutation<UploadResult, Error, File>({
    mutationFn: (file) => {
      setCurrent(file);
      setFraction(0);
      return uploadRun(file, model, setFraction);
    },
    onSettled: () => queryClient.invalidateQueries({ queryKey: runKeys.all }),
  });

  const pick = (files: FileList | null) => {
    const file = files?.[0];
    if (file && !upload.isPending) upload.mutate(file);
  };
  const onDrop = (e: DragEvent) => {
    e.preventDefault();
    setDragging(false);
    pick(e.dataTransfer.files);
  };

  return (
    <section aria-label="Upload a model run" className="rounded-md border border-line bg-surface-raised p-3">
      <div
        onDragOver={(e) => {
          e.preventDefault();
          setDragging(true);
        }}
        onDragLeave={() => setDragging(false)}
        onDrop={onDrop}
        className={`flex items-center gap-3 rounded border border-dashed px-3 py-4 ${dragging ? 'border-action bg-action-soft/40' : 'border-line'}`}
      >
        <Icon name="upload" className="h-6 w-6 text-ink-faint" />
        <div className="flex-1">
          <p className="font-medium">Drop a GRIB2 or NetCDF file here</p>
          <p className="text-xs text-ink-muted">Pressure levels with geopotential and temperature; a deterministic run or ensemble members. The file type is read from its content.</p>
        </div>
        <label className="flex flex-col text-2xs text-ink-muted">
          Model name (optional)
          <input
            value={model}
            onChange={(e) => setModel(e.target.value)}
            maxLength={40}
            placeholder="from the file"
            className="mt-0.5 w-36 rounded border border-line bg-surface px-2 py-1 text-xs text-ink"
          />
        </label>
        <button
          type="button"
          onClick={() => input.current?.click()}
          disabled={upload.isPending}
          className="rounded bg-action px-3 py-1.5 font-medium text-white hover:bg-action-hover disabled:opacity-50"
        >
          Choose file…
        </button>
        <input ref={input} type="file" className="sr-only" aria-label="Model run file" onChange={(e) => pick(e.target.files)} />
      </div>
      {current && upload.isPending ? (
        <div className="mt-2 flex items-center gap-3 text-xs">
          <span className="truncate">{current.name}</span>
          <span className="num text-ink-muted">{formatBytes(current.size)}</span>
          <ProgressBar value={fraction} label="Upload progress" />
        </div>
      ) : null}
      <div aria-live="polite">
        {upload.isSuccess ? (
          <p className="mt-2 text-xs">
            {upload.data.duplicate ? 'This file was uploaded before: ' : 'Received. Reading has started: '}
            <Link to={`/runs/${upload.data.run.id}`} className="text-action underline">
              open the run
            </Link>
          </p>
        ) : null}
        {upload.isError ? (
          <p role="alert" className="mt-2 text-xs text-caution">
            {upload.error instanceof ApiError ? upload.error.message : 'The upload failed.'}
          </p>
        ) : null}
      </div>
    </section>
  );
}
