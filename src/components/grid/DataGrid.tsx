/**
 * The one AG Grid wrapper: registers only the community modules Liftwise uses (once), and themes
 * the grid with the Theming API from the design tokens. Surfaces, lines and text read the CSS
 * variables of src/styles/index.css, so the same theme follows the light and dark switch.
 */
import {
  CellStyleModule,
  ClientSideRowModelModule,
  ColumnApiModule,
  InfiniteRowModelModule,
  ModuleRegistry,
  NumberFilterModule,
  PinnedRowModule,
  RowApiModule,
  RowStyleModule,
  TextFilterModule,
  TooltipModule,
  themeQuartz,
  ValidationModule,
} from 'ag-grid-community';
import { AgGridReact, type AgGridReactProps } from 'ag-grid-react';
import type { Ref } from 'react';
import { fonts, palette } from '@shared/design-tokens.ts';

ModuleRegistry.registerModules([
  ClientSideRowModelModule,
  InfiniteRowModelModule,
  NumberFilterModule,
  TextFilterModule,
  TooltipModule,
  PinnedRowModule,
  CellStyleModule,
  RowStyleModule,
  ColumnApiModule,
  RowApiModule,
  ...(import.meta.env.DEV ? [ValidationModule] : []),
]);

/** Dense desk theme: small rows, monospace figures via the "num" cell class, palette from the tokens. */
export const liftwiseGridTheme = themeQuartz.withParams({
  accentColor: palette.action.DEFAULT,
  backgroundColor: 'var(--lw-surface-raised)',
  foregroundColor: 'var(--lw-ink)',
  borderColor: 'var(--lw-line)',
  chromeBackgroundColor: 'var(--lw-surface-sunken)',
  headerBackgroundColor: 'var(--lw-surface-sunken)',
  headerTextColor: 'var(--lw-ink-muted)',
  oddRowBackgroundColor: 'var(--lw-surface)',
  rowHoverColor: 'color-mix(in srgb, var(--lw-ink) 6%, transparent)',
  fontFamily: [...fonts.sans],
  fontSize: 12,
  headerFontSize: 11,
  headerFontWeight: 600,
  rowHeight: 26,
  headerHeight: 30,
  spacing: 5,
  wrapperBorderRadius: 6,
});

export type DataGridProps<T> = AgGridReactProps<T> & { gridRef?: Ref<AgGridReact<T>>; height?: number | string };

export function DataGrid<T>({ gridRef, height = 520, ...props }: DataGridProps<T>) {
  return (
    <div style={{ height }} className="w-full">
      <AgGridReact<T>
        ref={gridRef}
        theme={liftwiseGridTheme}
        animateRows={false}
        {...props}
        defaultColDef={{ wrapHeaderText: true, autoHeaderHeight: true, ...props.defaultColDef }}
      />
    </div>
  );
}

/** Column defaults for figures: right-aligned monospace tabular digits. */
export const numberColumn = { type: 'rightAligned', cellClass: 'num text-right', headerClass: 'text-right' } as const;
