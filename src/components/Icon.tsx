/** Line icons drawn for Liftwise on a 20-unit grid; stroke follows the text colour. */
const paths = {
  runs: 'M3 5h14M3 10h14M3 15h9M15 13l2 2-2 2',
  ascent: 'M3 15c3 0 4-8 7-8s4 8 7 8M10 3v5M8 5l2-2 2 2',
  scenarios: 'M3 4h14v12H3zM3 8h14M8 8v8M13 8v8',
  call: 'M4 4h12v9H9l-4 3v-3H4zM7 8h6M7 11h4',
  seal: 'M10 2l6 3v5c0 4-3 7-6 8-3-1-6-4-6-8V5zM7 10l2 2 4-4',
  admin: 'M10 7a3 3 0 1 0 0 6 3 3 0 0 0 0-6zM10 2v2M10 16v2M2 10h2M16 10h2M4.3 4.3l1.4 1.4M14.3 14.3l1.4 1.4M4.3 15.7l1.4-1.4M14.3 5.7l1.4-1.4',
  outbox: 'M3 6l7 5 7-5M3 5h14v10H3z',
  sun: 'M10 6a4 4 0 1 0 0 8 4 4 0 0 0 0-8zM10 1v2M10 17v2M1 10h2M17 10h2M3.6 3.6l1.4 1.4M15 15l1.4 1.4M3.6 16.4L5 15M15 5l1.4-1.4',
  moon: 'M15 12.5A6.5 6.5 0 0 1 7.5 5a6.5 6.5 0 1 0 7.5 7.5z',
  signOut: 'M8 4H4v12h4M12 6l4 4-4 4M16 10H8',
  caution: 'M10 3l8 14H2zM10 8v4M10 14.5v.5',
  upload: 'M10 13V3M6 7l4-4 4 4M3 13v4h14v-4',
} as const;

export type IconName = keyof typeof paths;

export function Icon({ name, className = 'h-4 w-4', title }: { name: IconName; className?: string; title?: string }) {
  return (
    <svg
      viewBox="0 0 20 20"
      className={className}
      fill="none"
      stroke="currentColor"
      strokeWidth={1.6}
      strokeLinecap="round"
      strokeLinejoin="round"
      aria-hidden={title ? undefined : true}
      role={title ? 'img' : undefined}
    >
      {title ? <title>{title}</title> : null}
      <path d={paths[name]} />
    </svg>
  );
}
