/**
 * The demo's model runs: which runs exist, their wave parameters, and how members are
 * perturbed. Deterministic: a seeded generator (mulberry32) drives every random choice.
 */
import { BASE_WAVE, type WaveParameters } from './atmosphere.ts';
import { mulberry32 } from '../../server/science/random.ts';

/** Invented model names (the files carry centre 255, so the name travels in the manifest). */
export const DEMO_MODELS = {
  NVM: 'Nordvale Mesoscale Model (deterministic, synthetic)',
  NVE: 'Nordvale Ensemble (synthetic)',
} as const;
export type DemoModel = keyof typeof DEMO_MODELS;

export const CURRENT_CYCLE = '2026-12-01T00:00:00Z';
export const PREVIOUS_CYCLE = '2026-11-30T12:00:00Z';

/** FNV-1a 32-bit hash of a string: turns a readable seed into a generator state. */
export function hashSeed(text: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < text.length; i++) {
    h ^= text.charCodeAt(i);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  return h;
}

/** Standard normal numbers from a uniform generator (Box-Muller). */
export function normalGenerator(uniform: () => number): () => number {
  return () => {
    const u1 = Math.max(uniform(), 1e-12);
    const u2 = uniform();
    return Math.sqrt(-2 * Math.log(u1)) * Math.cos(2 * Math.PI * u2);
  };
}

/** Hours from the current cycle to `iso` (negative for the previous cycle). */
export function hoursFromCurrentCycle(iso: string): number {
  return (Date.parse(iso) - Date.parse(CURRENT_CYCLE)) / 3_600_000;
}

/** The deterministic run's wave per cycle: the previous cycle saw a slower, weaker wave. */
export function deterministicWave(cycle: string): WaveParameters {
  if (cycle === CURRENT_CYCLE) return { ...BASE_WAVE };
  return { ...BASE_WAVE, speedMs: 6.3, amplitude: 0.9, troughLonDeg: -10.5, centreLatDeg: 61.8 };
}

/** The ensemble's unperturbed control per cycle (close to, not equal to, the deterministic run). */
export function ensembleControlWave(cycle: string): WaveParameters {
  const det = deterministicWave(cycle);
  return { ...det, speedMs: det.speedMs * 1.03, amplitude: det.amplitude * 0.96 };
}

/** Speed factors of the three member groups: a slower, a central and a faster wave. */
export const MEMBER_GROUP_SPEED = [0.78, 1.0, 1.24] as const;

/**
 * Member waves for one cycle: member 0 is the control; members 1.. cycle through the three
 * speed groups, each with seeded noise on speed, amplitude, position and tilt, so the
 * ensemble spreads and clusters into slower / central / faster scenarios.
 */
export function memberWaves(cycle: string, members: number, seed: string): WaveParameters[] {
  const control = ensembleControlWave(cycle);
  const normal = normalGenerator(mulberry32(hashSeed(`${seed}|${cycle}`)));
  const out: WaveParameters[] = [control];
  for (let m = 1; m < members; m++) {
    const group = (m - 1) % 3;
    out.push({
      ...control,
      speedMs: control.speedMs * MEMBER_GROUP_SPEED[group] * (1 + 0.04 * normal()),
      amplitude: control.amplitude * (1 + 0.12 * normal()),
      troughLonDeg: control.troughLonDeg + 1.5 * normal(),
      centreLatDeg: control.centreLatDeg + 1.5 * normal(),
      tiltRad: control.tiltRad * (1 + 0.08 * normal()),
      jetMaxMs: control.jetMaxMs * (1 + 0.05 * normal()),
    });
  }
  return out;
}
