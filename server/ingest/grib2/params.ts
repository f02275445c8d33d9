/**
 * GRIB2 parameters (discipline / category / number, WMO Code table 4.2) that Liftwise reads,
 * mapped to canonical names, with the conversion into canonical units.
 */
import { STANDARD_GRAVITY, type CanonicalVariable } from '../canonical.ts';

export interface ParamMapping {
  name: CanonicalVariable;
  /** short name of the file's parameter, for messages */
  source: string;
  /** level types (Code table 4.5) accepted: 100 isobaric; 1 ground, 10 entire atmosphere, 200 ECMWF entire atmosphere */
  levels: number[];
  /** multiply the decoded values by this to reach canonical units */
  factor: number;
  /** the parameter is an accumulation (needs statistical processing 1 from 4.8 / 4.11) */
  accumulated?: boolean;
}

const ISOBARIC = [100];
const SURFACE = [1, 10, 200];

const TABLE: Record<string, ParamMapping> = {
  '0/3/4': { name: 'z', source: 'z (0/3/4)', levels: ISOBARIC, factor: 1 },
  '0/3/5': { name: 'z', source: 'gh (0/3/5)', levels: ISOBARIC, factor: STANDARD_GRAVITY },
  '0/0/0': { name: 't', source: 't (0/0/0)', levels: ISOBARIC, factor: 1 },
  '0/1/1': { name: 'r', source: 'r (0/1/1)', levels: ISOBARIC, factor: 1 },
  '0/1/0': { name: 'q', source: 'q (0/1/0)', levels: ISOBARIC, factor: 1 },
  '0/2/2': { name: 'u', source: 'u (0/2/2)', levels: ISOBARIC, factor: 1 },
  '0/2/3': { name: 'v', source: 'v (0/2/3)', levels: ISOBARIC, factor: 1 },
  '0/2/8': { name: 'w', source: 'w (0/2/8)', levels: ISOBARIC, factor: 1 },
  '0/1/8': { name: 'tp', source: 'tp (0/1/8)', levels: [1], factor: 1, accumulated: true },
  '0/6/1': { name: 'tcc', source: 'tcc (0/6/1, %)', levels: SURFACE, factor: 0.01 },
};

/** The mapping for a parameter on a level type, or null when Liftwise does not read it. */
export function lookupParam(discipline: number, category: number, number: number, levelType: number): ParamMapping | null {
  const m = TABLE[`${discipline}/${category}/${number}`];
  return m && m.levels.includes(levelType) ? m : null;
}

/** Hours per unit of Code table 4.4; months, years and longer are not fixed lengths: null. */
export function hoursPerUnit(unit: number): number | null {
  switch (unit) {
    case 0: return 1 / 60;
    case 1: return 1;
    case 2: return 24;
    case 10: return 3;
    case 11: return 6;
    case 12: return 12;
    case 13: return 1 / 3600;
    default: return null;
  }
}

/** ecCodes-style centre names for Code table C-11 entries commonly seen on a trading desk. */
export function centreName(code: number): string {
  const names: Record<number, string> = { 7: 'NCEP', 98: 'ECMWF', 78: 'DWD', 85: 'Meteo-France', 74: 'UK Met Office', 54: 'CMC', 34: 'JMA' };
  return names[code] ?? `centre ${code}`;
}
