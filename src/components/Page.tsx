import type { ReactNode } from 'react';
import { Icon, type IconName } from './Icon.tsx';

/** The heading strip of a screen: title, one line of purpose, actions on the right. */
export function PageHeader({ title, subtitle, actions }: { title: string; subtitle?: string; actions?: ReactNode }) {
  return (
    <header className="flex items-end justify-between gap-4 border-b border-line pb-3">
      <div>
        <h1 className="text-lg font-semibold tracking-tight">{title}</h1>
        {subtitle ? <p className="mt-0.5 text-ink-muted">{subtitle}</p> : null}
      </div>
      {actions ? <div className="flex items-center gap-2">{actions}</div> : null}
    </header>
  );
}

export function Card({ title, children, className = '' }: { title?: string; children: ReactNode; className?: string }) {
  return (
    <section className={`rounded-md border border-line bg-surface-raised ${className}`}>
      {title ? <h2 className="border-b border-line px-3 py-2 text-xs font-semibold uppercase tracking-wide text-ink-muted">{title}</h2> : null}
      <div className="p-3">{children}</div>
    </section>
  );
}

/** What a screen shows when it has nothing yet: what will appear here, and what brings it. */
export function EmptyState({ icon, title, children }: { icon: IconName; title: string; children: ReactNode }) {
  return (
    <div role="status" className="flex flex-col items-center gap-2 rounded-md border border-dashed border-line bg-surface-raised px-6 py-10 text-center">
      <Icon name={icon} className="h-7 w-7 text-ink-faint" />
      <p className="font-medium">{title}</p>
      <div className="max-w-prose text-ink-muted">{children}</div>
    </div>
  );
}

/** SCIENCE.md section 8: shown wherever a figure could be read as more than an estimate. */
export function CautionNote({ children }: { children: ReactNode }) {
  return (
    <aside className="flex gap-2 rounded-md border border-caution/30 bg-caution-soft/60 px-3 py-2 text-xs text-caution dark:bg-caution/10 dark:text-[#F3A59D]">
      <Icon name="caution" className="mt-0.5 h-4 w-4 shrink-0" />
      <div>{children}</div>
    </aside>
  );
}
