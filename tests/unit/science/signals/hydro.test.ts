import { describe, expect, it } from 'vitest';
import {
  catchmentInflowEnergy, dailyTotalsFromIntervals, degreeDayMelt, hydropowerEnergyGwh, hydropowerMw, linearReservoirStep,
} from '../../../../server/science/hydro.ts';

const catchment = {
  areaM2: 500e6, headM: 400, efficiency: 0.9, runoffCoefficient: 0.7, recessionDays: 20,
  snowDdfMmPerDayK: 4, meltThresholdC: 0,
};

function day(i: number): string {
  return new Date(Date.UTC(2026, 0, 1) + i * 86_400_000).toISOString().slice(0, 10);
}

describe('hydropower formula (handbook hydropower formula P = rho g Q H eta)', () => {
  it('gives ~0.883 MW for 1 m3/s through 100 m at 90 %', () => {
    expect(hydropowerMw(1, 100, 0.9)).toBeCloseTo(0.883, 3);
  });
  it('gives energy = power x time: one hour of 1 m3/s through 100 m at 90 % is 0.883 MWh', () => {
    expect(hydropowerEnergyGwh(3600, 100, 0.9) * 1000).toBeCloseTo(hydropowerMw(1, 100, 0.9), 12);
  });
  it('is E[GWh] = V 1000 9.81 H eta / 3.6e12 (SCIENCE.md section 5)', () => {
    expect(hydropowerEnergyGwh(1e6, 250, 0.85)).toBeCloseTo((1e6 * 1000 * 9.81 * 250 * 0.85) / 3.6e12, 12);
  });
});

describe('degreeDayMelt (source: Hock 2003)', () => {
  it('melts DDF x (T - T0) above the threshold and nothing below', () => {
    expect(degreeDayMelt(5, 4, 0)).toBe(20);
    expect(degreeDayMelt(-3, 4, 0)).toBe(0);
    expect(degreeDayMelt(2, 3, 1)).toBe(3);
  });
});

describe('linear reservoir (Q_t = Q_{t-1} e^{-dt/k} + (1 - e^{-dt/k}) I_t)', () => {
  it('conserves mass: total outflow tends to total inflow over a long run', () => {
    const inflow = Array.from({ length: 600 }, (_, i) => (i < 30 ? 5 + (i % 7) : 0));
    let q = 0, out = 0;
    for (const i of inflow) { q = linearReservoirStep(q, i, 1, 20); out += q; }
    const total = inflow.reduce((s, x) => s + x, 0);
    expect(Math.abs(out / total - 1)).toBeLessThan(1e-9);
  });
  it('recedes by e^{-dt/k} per step without inflow and tends to a steady inflow', () => {
    expect(linearReservoirStep(10, 0, 1, 20)).toBeCloseTo(10 * Math.exp(-1 / 20), 12);
    let q = 0;
    for (let t = 0; t < 1000; t++) q = linearReservoirStep(q, 3, 1, 20);
    expect(q).toBeCloseTo(3, 9);
  });
});

describe('catchmentInflowEnergy (daily snowpack, runoff, routing, energy)', () => {
  it('stores snowfall, melts it by degree-days when warm and releases all of it eventually', () => {
    const days = [
      ...Array.from({ length: 10 }, (_, i) => ({ day: day(i), precipitationMm: 8, snowShare: 1, tempC: -6 })),
      ...Array.from({ length: 400 }, (_, i) => ({ day: day(10 + i), precipitationMm: 0, snowShare: 0, tempC: 3 })),
    ];
    const out = catchmentInflowEnergy(days, catchment);
    expect(out[9].sweMm).toBeCloseTo(80, 9);
    expect(out[9].meltMm).toBe(0);
    expect(out[10].meltMm).toBeCloseTo(12, 9); // 4 mm/d/K x 3 K
    expect(out[out.length - 1].sweMm).toBe(0);
    const melted = out.reduce((s, d) => s + d.meltMm, 0);
    expect(melted).toBeCloseTo(80, 9);
    const routed = out.reduce((s, d) => s + d.outflowMmPerDay, 0);
    expect(routed).toBeCloseTo(0.7 * 80, 6); // runoff coefficient 0.7 of the liquid water
  });
  it('turns routed depth into volume and energy', () => {
    const out = catchmentInflowEnergy([{ day: day(0), precipitationMm: 20, snowShare: 0, tempC: 8 }], catchment);
    const runoff = 0.7 * 20;
    const routed = (1 - Math.exp(-1 / 20)) * runoff;
    expect(out[0].runoffMm).toBeCloseTo(runoff, 12);
    expect(out[0].volumeM3).toBeCloseTo((routed / 1000) * 500e6, 3);
    expect(out[0].energyGwh).toBeCloseTo(hydropowerEnergyGwh(out[0].volumeM3, 400, 0.9), 12);
  });
  it('splits precipitation by the snow share and starts from a given state', () => {
    const out = catchmentInflowEnergy([{ day: day(0), precipitationMm: 10, snowShare: 0.3, tempC: -1 }], catchment, { sweMm: 50, outflowMmPerDay: 2 });
    expect(out[0].snowfallMm).toBeCloseTo(3, 12);
    expect(out[0].rainMm).toBeCloseTo(7, 12);
    expect(out[0].sweMm).toBeCloseTo(53, 12);
    expect(out[0].outflowMmPerDay).toBeCloseTo(2 * Math.exp(-1 / 20) + (1 - Math.exp(-1 / 20)) * 0.7 * 7, 12);
  });
  it('refuses a non-positive area or recession constant', () => {
    expect(() => catchmentInflowEnergy([], { ...catchment, recessionDays: 0 })).toThrow(/recession/);
  });
});

describe('dailyTotalsFromIntervals', () => {
  it('shares an interval across midnight in proportion to its time in each UTC day', () => {
    const t0 = Date.UTC(2026, 0, 1, 18);
    const totals = dailyTotalsFromIntervals([t0], [t0 + 12 * 3_600_000], [12]);
    expect(totals.get('2026-01-01')).toBeCloseTo(6, 12);
    expect(totals.get('2026-01-02')).toBeCloseTo(6, 12);
  });
});
