import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { fireEvent, render, screen, waitFor, within } from '@testing-library/react';
import type { ReactNode } from 'react';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { CalibrationSection } from '@/features/admin/CalibrationSection.tsx';
import { RegionsSection } from '@/features/admin/RegionsSection.tsx';
import { DEFAULT_CALIBRATION_SET } from '@shared/calibration.ts';

const HYDRO = {
  id: 'nv-hydro-a', name: 'Alpha', kind: 'hydro',
  properties: { id: 'nv-hydro-a', name: 'Alpha', kind: 'hydro', headM: 620, efficiency: 0.91, runoffCoefficient: 0.78, recessionDays: 18 },
  geometry: { type: 'Polygon', coordinates: [[[6, 60], [8, 60], [8, 61], [6, 61], [6, 60]]] },
  areaKm2: 12345,
};

const feature = (id: string, efficiency: number) => ({
  type: 'Feature',
  properties: { id, name: id, kind: 'hydro', headM: 100, efficiency, runoffCoefficient: 0.5, recessionDays: 10 },
  geometry: HYDRO.geometry,
});

let calls: { url: string; init?: RequestInit }[] = [];

function wrap(children: ReactNode) {
  const client = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  return render(<QueryClientProvider client={client}>{children}</QueryClientProvider>);
}

beforeEach(() => {
  calls = [];
  vi.stubGlobal('fetch', vi.fn(async (input: RequestInfo | URL, init?: RequestInit) => {
    const url = String(input);
    calls.push({ url, init });
    if (url.endsWith('/api/regions') && init?.method === 'PUT') {
      const issues = [{ featureIndex: 0, id: 'srv', message: 'feature 0 (id "srv"): refused by the server' }];
      return new Response(JSON.stringify({ error: { code: 'unprocessable', message: 'The regions file has 1 problem(s); nothing was changed.', details: { issues } } }), { status: 422 });
    }
    if (url.endsWith('/api/regions')) return new Response(JSON.stringify({ regions: [HYDRO] }), { status: 200 });
    if (url.endsWith('/api/calibration-sets') && init?.method === 'POST') {
      const body = JSON.parse(String(init.body));
      return new Response(JSON.stringify({ set: { ...DEFAULT_CALIBRATION_SET, version: 2, basedOn: 1, parameters: { ...DEFAULT_CALIBRATION_SET.parameters, ...body.parameters }, createdBy: 'M', createdAt: '2026-12-01T06:00:00Z' } }), { status: 201 });
    }
    if (url.endsWith('/api/calibration-sets')) {
      return new Response(JSON.stringify({ sets: [{ ...DEFAULT_CALIBRATION_SET, note: 'defaults', basedOn: null, createdBy: null, createdAt: '2026-12-01T00:00:00Z' }] }), { status: 200 });
    }
    return new Response('{}', { status: 404 });
  }));
});
afterEach(() => vi.unstubAllGlobals());

describe('Regions section', () => {
  it('lists the regions with units and draws them on the map', async () => {
    const { container } = wrap(<RegionsSection />);
    expect(await screen.findByText('Alpha')).toBeTruthy();
    expect(screen.getByText(/head 620 m, efficiency 91 %/)).toBeTruthy();
    expect(screen.getByText('12,345 km²')).toBeTruthy();
    expect(container.querySelectorAll('svg path')).toHaveLength(1);
  });

  it('pasted text with a bad feature lists the problem in plain words and cannot be sent', async () => {
    wrap(<RegionsSection />);
    await screen.findByText('Alpha');
    fireEvent.change(screen.getByLabelText(/paste the GeoJSON/), { target: { value: JSON.stringify({ type: 'FeatureCollection', features: [feature('ok', 0.9), feature('bad', 1.5)] }) } });
    const alert = await screen.findByRole('alert');
    expect(within(alert).getByText(/feature 1 \(id "bad"\): properties.efficiency/)).toBeTruthy();
    expect((screen.getByRole('button', { name: 'Replace regions' }) as HTMLButtonElement).disabled).toBe(true);
  });

  it('a valid file is previewed, sent, and the server refusal is shown per feature', async () => {
    const { container } = wrap(<RegionsSection />);
    await screen.findByText('Alpha');
    fireEvent.change(screen.getByLabelText(/paste the GeoJSON/), { target: { value: JSON.stringify({ type: 'FeatureCollection', features: [feature('one', 0.9), feature('two', 0.8)] }) } });
    expect(await screen.findByText(/The file is valid: 2 region/)).toBeTruthy();
    expect(container.querySelectorAll('svg path')).toHaveLength(2);
    fireEvent.click(screen.getByRole('button', { name: 'Replace regions' }));
    expect(await screen.findByText(/refused by the server/)).toBeTruthy();
    expect(calls.some((c) => c.init?.method === 'PUT')).toBe(true);
  });
});

describe('Calibration sets section', () => {
  it('shows a version with units and creates a new version with only the changed parameters', async () => {
    wrap(<CalibrationSection />);
    expect(await screen.findByText('v1 Liftwise defaults', { selector: 'p' })).toBeTruthy();
    expect(screen.getAllByText('mm d-1 K-1').length).toBeGreaterThan(0);
    fireEvent.click(screen.getByRole('button', { name: 'New version from v1' }));
    fireEvent.change(screen.getByLabelText('precipEfficiency'), { target: { value: '0.65' } });
    fireEvent.click(screen.getByRole('button', { name: /Create the new version \(1 change\)/ }));
    await waitFor(() => expect(calls.some((c) => c.init?.method === 'POST')).toBe(true));
    const post = calls.find((c) => c.init?.method === 'POST')!;
    expect(JSON.parse(String(post.init!.body))).toMatchObject({ basedOn: 1, parameters: { precipEfficiency: 0.65 } });
    expect(Object.keys(JSON.parse(String(post.init!.body)).parameters)).toEqual(['precipEfficiency']);
  });
});
