/**
 * Calibration sets in the numerics (SCIENCE.md section 7): parsing with clear messages, and
 * the next version of a set after an edit. The schema, units and sources are in
 * shared/calibration.ts.
 */
import {
  calibrationSetSchema, DEFAULT_CALIBRATION_SET,
  type CalibrationParameters, type CalibrationSet,
} from '@shared/calibration.ts';

export { DEFAULT_CALIBRATION_SET, CALIBRATION_PARAMETER_INFO } from '@shared/calibration.ts';

export class CalibrationError extends Error {
  readonly problems: string[];
  constructor(problems: string[]) {
    super(`invalid calibration set: ${problems.join('; ')}`);
    this.name = 'CalibrationError';
    this.problems = problems;
  }
}

/** Parses a calibration set, throwing CalibrationError with one message per bad field. */
export function parseCalibrationSet(input: unknown): CalibrationSet {
  const result = calibrationSetSchema.safeParse(input);
  if (result.success) return result.data;
  throw new CalibrationError(result.error.issues.map((i) => `${i.path.join('.') || 'set'}: ${i.message}`));
}

/**
 * The next version of a set: previous parameters with the changes applied, version + 1,
 * validated as a whole (so a change cannot break a cross-parameter rule such as the rain/snow
 * thresholds' order).
 */
export function nextCalibrationSet(
  previous: CalibrationSet, changes: Partial<CalibrationParameters>, name = previous.name, note?: string,
): CalibrationSet {
  return parseCalibrationSet({
    version: previous.version + 1,
    name,
    ...(note !== undefined ? { note } : {}),
    parameters: { ...previous.parameters, ...changes },
  });
}

/** Parameters whose values differ between two sets, for the calibration editor's diff. */
export function calibrationDifferences(a: CalibrationSet, b: CalibrationSet): { parameter: keyof CalibrationParameters; from: unknown; to: unknown }[] {
  const keys = Object.keys(a.parameters) as (keyof CalibrationParameters)[];
  return keys.filter((k) => a.parameters[k] !== b.parameters[k]).map((k) => ({ parameter: k, from: a.parameters[k], to: b.parameters[k] }));
}

/** The first version, validated (guards the defaults against a schema change). */
export function defaultCalibrationSet(): CalibrationSet {
  return parseCalibrationSet(DEFAULT_CALIBRATION_SET);
}
