/**
 * Run definitions: seeded and reproducible, and the ensemble clusters into slower, central and
 * faster waves around its control.
 */
import { describe, expect, it } from 'vitest';
import {
  CURRENT_CYCLE, MEMBER_GROUP_SPEED, PREVIOUS_CYCLE, deterministicWave, ensembleControlWave, hashSeed, hoursFromCurrentCycle,
  memberWaves,
} from '../../../scripts/demo/runs.ts';
import { mulberry32 } from '../../../server/science/random.ts';

describe('seeded generator', () => {
  it('same seed, same sequence; another seed, another sequence', () => {
    const a = mulberry32(hashSeed('x'));
    const b = mulberry32(hashSeed('x'));
    const c = mulberry32(hashSeed('y'));
    const sa = Array.from({ length: 50 }, a);
    expect(Array.from({ length: 50 }, b)).toEqual(sa);
    expect(Array.from({ length: 50 }, c)).not.toEqual(sa);
    for (const u of sa) expect(u >= 0 && u < 1).toBe(true);
  });

  it('is roughly uniform (mean 1/2, variance 1/12)', () => {
    const g = mulberry32(hashSeed('uniform'));
    const xs = Array.from({ length: 20000 }, g);
    const mean = xs.reduce((a, b) => a + b, 0) / xs.length;
    const variance = xs.reduce((a, b) => a + (b - mean) ** 2, 0) / xs.length;
    expect(mean).toBeCloseTo(0.5, 2);
    expect(variance).toBeCloseTo(1 / 12, 2);
  });
});

describe('members', () => {
  const members = memberWaves(CURRENT_CYCLE, 20, 'nordvale-demo');

  it('member 0 is the unperturbed control', () => {
    expect(members).toHaveLength(20);
    expect(members[0]).toEqual(ensembleControlWave(CURRENT_CYCLE));
  });

  it('reproducible for a seed, different for another seed or cycle', () => {
    expect(memberWaves(CURRENT_CYCLE, 20, 'nordvale-demo')).toEqual(members);
    expect(memberWaves(CURRENT_CYCLE, 20, 'other')).not.toEqual(members);
    expect(memberWaves(PREVIOUS_CYCLE, 20, 'nordvale-demo')[5]).not.toEqual(members[5]);
  });

  it('speeds form three separated groups', () => {
    const groups = MEMBER_GROUP_SPEED.map((_, g) => members.slice(1).filter((_, i) => i % 3 === g).map((w) => w.speedMs));
    const stats = groups.map((s) => {
      const mean = s.reduce((a, b) => a + b, 0) / s.length;
      return { mean, min: Math.min(...s), max: Math.max(...s) };
    });
    expect(stats[0].max).toBeLessThan(stats[1].min);
    expect(stats[1].max).toBeLessThan(stats[2].min);
    expect(stats[2].mean - stats[0].mean).toBeGreaterThan(2);
  });

  it('the previous cycle differs from the current one and sits 12 h earlier', () => {
    expect(deterministicWave(PREVIOUS_CYCLE)).not.toEqual(deterministicWave(CURRENT_CYCLE));
    expect(hoursFromCurrentCycle(PREVIOUS_CYCLE)).toBe(-12);
  });
});
