import { describe, expect, it } from 'vitest';
import { CALIBRATION_PARAMETER_INFO, calibrationSetSchema, DEFAULT_CALIBRATION_SET } from '../../../../shared/calibration.ts';
import {
  CalibrationError, calibrationDifferences, defaultCalibrationSet, nextCalibrationSet, parseCalibrationSet,
} from '../../../../server/science/calibration.ts';

describe('calibration sets', () => {
  it('has version 1 defaults that pass the schema, with unit and source for every parameter', () => {
    const set = defaultCalibrationSet();
    expect(set.version).toBe(1);
    expect(calibrationSetSchema.safeParse(DEFAULT_CALIBRATION_SET).success).toBe(true);
    for (const key of Object.keys(set.parameters) as (keyof typeof set.parameters)[]) {
      expect(CALIBRATION_PARAMETER_INFO[key].unit.length).toBeGreaterThan(0);
      expect(CALIBRATION_PARAMETER_INFO[key].source.length).toBeGreaterThan(0);
    }
  });
  it('keeps the published defaults (Kasten and Czeplak 1980: 0.75 and 3.4; solar constant 1361 W/m2; 680 / 440 hPa)', () => {
    const p = DEFAULT_CALIBRATION_SET.parameters;
    expect([p.cloudAttenuationA, p.cloudAttenuationB, p.solarConstantWm2]).toEqual([0.75, 3.4, 1361]);
    expect([p.cloudLowMidBoundaryHpa, p.cloudMidHighBoundaryHpa]).toEqual([680, 440]);
    expect(p.snowDdfMmPerDayK).toBeGreaterThanOrEqual(2.5); // Hock (2003) range for snow, from memory
    expect(p.snowDdfMmPerDayK).toBeLessThanOrEqual(6);
  });
  it('names every bad field', () => {
    const bad = { ...DEFAULT_CALIBRATION_SET, parameters: { ...DEFAULT_CALIBRATION_SET.parameters, precipEfficiency: 1.5, albedo: -0.1 } };
    try {
      parseCalibrationSet(bad);
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(CalibrationError);
      const problems = (e as CalibrationError).problems.join('\n');
      expect(problems).toMatch(/parameters\.precipEfficiency/);
      expect(problems).toMatch(/parameters\.albedo/);
    }
    expect(() => parseCalibrationSet({ ...DEFAULT_CALIBRATION_SET, parameters: { ...DEFAULT_CALIBRATION_SET.parameters, unknownKnob: 1 } })).toThrow(/unknownKnob/);
  });
  it('makes the next version from changes and refuses a change that breaks a cross-parameter rule', () => {
    const v1 = defaultCalibrationSet();
    const v2 = nextCalibrationSet(v1, { precipEfficiency: 0.6 }, 'Nordvale tuned');
    expect(v2.version).toBe(2);
    expect(v2.parameters.precipEfficiency).toBe(0.6);
    expect(calibrationDifferences(v1, v2)).toEqual([{ parameter: 'precipEfficiency', from: 0.8, to: 0.6 }]);
    expect(() => nextCalibrationSet(v2, { snowAllBelowC: 2, rainAllAboveC: 1 })).toThrow(/snowAllBelowC must be below rainAllAboveC/);
  });
});
