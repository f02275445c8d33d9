/** "21–40 of 73" with Newer / Older buttons, for the lists of this screen (newest first). */
export function Pager({ offset, pageSize, total, onChange }: { offset: number; pageSize: number; total: number; onChange(offset: number): void }) {
  return (
    <div className="mt-2 flex items-center gap-2 text-xs text-ink-muted">
      <span className="num">
        {offset + 1}–{Math.min(offset + pageSize, total)} of {total}
      </span>
      <button type="button" disabled={offset === 0} onClick={() => onChange(Math.max(0, offset - pageSize))} className="rounded border border-line px-2 py-0.5 disabled:opacity-40">
        Newer
      </button>
      <button type="button" disabled={offset + pageSize >= total} onClick={() => onChange(offset + pageSize)} className="rounded border border-line px-2 py-0.5 disabled:opacity-40">
        Older
      </button>
    </div>
  );
}
