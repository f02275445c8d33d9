/**
 * Pure helpers for lat/lon charts: coastlines from Natural Earth TopoJSON (world-atlas), region
 * outlines from GeoJSON, lines clipped to a box, and grid cells as rectangles for a custom series.
 */
import { mesh } from 'topojson-client';
import type { GeometryObject, Topology } from 'topojson-specification';

export type LonLat = [number, number];
export type Polyline = LonLat[];

export interface BBox {
  lonMin: number;
  lonMax: number;
  latMin: number;
  latMax: number;
}

/** Every arc of a TopoJSON object as polylines (for "land" these are the coastlines). */
export function topologyLines(topology: Topology, objectName: string): Polyline[] {
  const object = topology.objects[objectName] as GeometryObject | undefined;
  if (!object) throw new Error(`the topology has no object named "${objectName}"`);
  return mesh(topology, object).coordinates as Polyline[];
}

const inside = (p: LonLat, b: BBox) => p[0] >= b.lonMin && p[0] <= b.lonMax && p[1] >= b.latMin && p[1] <= b.latMax;

/**
 * Keeps the parts of each polyline inside the box (plus the first point outside on each side,
 * so a coast runs to the frame instead of stopping short of it). Drops one-point remnants.
 */
export function clipLines(lines: Polyline[], box: BBox): Polyline[] {
  const out: Polyline[] = [];
  for (const line of lines) {
    let current: Polyline = [];
    for (let i = 0; i < line.length; i++) {
      const p = line[i];
      if (inside(p, box)) {
        if (current.length === 0 && i > 0) current.push(line[i - 1]);
        current.push(p);
      } else if (current.length > 0) {
        current.push(p);
        out.push(current);
        current = [];
      }
    }
    if (current.length > 1) out.push(current);
  }
  return out.filter((l) => l.length > 1);
}

/** The rings of a GeoJSON Polygon or MultiPolygon as closed polylines; other geometries give none. */
export function outlineRings(geometry: { type: string; coordinates?: unknown } | null | undefined): Polyline[] {
  if (!geometry) return [];
  if (geometry.type === 'Polygon') return (geometry.coordinates as number[][][]).map((ring) => ring.map((p) => [p[0], p[1]] as LonLat));
  if (geometry.type === 'MultiPolygon') return (geometry.coordinates as number[][][][]).flatMap((poly) => poly.map((ring) => ring.map((p) => [p[0], p[1]] as LonLat)));
  return [];
}

/** Cell edges halfway between centres, extended by half a spacing at both ends (uneven spacing is fine). */
export function cellEdges(centres: readonly number[]): number[] {
  const n = centres.length;
  if (n === 0) return [];
  if (n === 1) return [centres[0] - 0.5, centres[0] + 0.5];
  const edges = [centres[0] - (centres[1] - centres[0]) / 2];
  for (let i = 0; i < n - 1; i++) edges.push((centres[i] + centres[i + 1]) / 2);
  edges.push(centres[n - 1] + (centres[n - 1] - centres[n - 2]) / 2);
  return edges;
}

/**
 * Data for a custom "cells" series: one item per finite value, [x0, x1, y0, y1, value, xCentre, yCentre].
 * `values` is row-major [y][x].
 */
export function gridCells(x: readonly number[], y: readonly number[], values: readonly (number | null)[]): number[][] {
  const xe = cellEdges(x);
  const ye = cellEdges(y);
  const items: number[][] = [];
  for (let j = 0; j < y.length; j++) {
    for (let i = 0; i < x.length; i++) {
      const v = values[j * x.length + i];
      if (v === null || v === undefined || !Number.isFinite(v)) continue;
      items.push([xe[i], xe[i + 1], ye[j], ye[j + 1], v, x[i], y[j]]);
    }
  }
  return items;
}

/** Width / height of a plate-carrée map that keeps distances honest at the box's middle latitude. */
export function mapAspect(box: BBox): number {
  const midLat = ((box.latMin + box.latMax) / 2) * (Math.PI / 180);
  return ((box.lonMax - box.lonMin) * Math.cos(midLat)) / Math.max(1e-6, box.latMax - box.latMin);
}
