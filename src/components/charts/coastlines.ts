/**
 * Natural Earth coastlines (public domain, world-atlas land-50m) loaded on demand, so the map
 * code path does not put half a megabyte into the first page load.
 */
import { useEffect, useState } from 'react';
import type { Topology } from 'topojson-specification';
import { clipLines, topologyLines, type BBox, type Polyline } from './geo.ts';

let cache: Promise<Polyline[]> | null = null;

export function loadCoastlines(): Promise<Polyline[]> {
  cache ??= import('world-atlas/land-50m.json').then((m) => topologyLines((m.default ?? m) as unknown as Topology, 'land'));
  return cache;
}

/** The coastlines inside `box` (with a margin), or [] until they have loaded or if they fail. */
export function useCoastlines(box: BBox | null): Polyline[] {
  const [lines, setLines] = useState<Polyline[]>([]);
  const key = box ? `${box.lonMin},${box.lonMax},${box.latMin},${box.latMax}` : '';
  useEffect(() => {
    if (!box) return;
    let live = true;
    const margin = 2;
    loadCoastlines()
      .then((all) => {
        if (live) setLines(clipLines(all, { lonMin: box.lonMin - margin, lonMax: box.lonMax + margin, latMin: box.latMin - margin, latMax: box.latMax + margin }));
      })
      .catch(() => {
        if (live) setLines([]);
      });
    return () => {
      live = false;
    };
    // eslint-disable-next-line react-hooks/exhaustive-deps -- the box's numbers are the key
  }, [key]);
  return lines;
}
