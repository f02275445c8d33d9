/** Refusals of the QG diagnosis: each carries a stable `code` the caller can branch on. */
export type QgErrorCode = 'NEAR_EQUATOR' | 'TOO_FEW_LEVELS' | 'MISSING_VALUES' | 'BAD_GRID' | 'BAD_SHAPE';

export class QgInputError extends Error {
  readonly code: QgErrorCode;
  constructor(code: QgErrorCode, message: string) {
    super(message);
    this.name = 'QgInputError';
    this.code = code;
  }
}

/** QG theory assumes |f| well away from zero: domains reaching within 10 degrees of the equator are refused. */
export class EquatorialDomainError extends QgInputError {
  constructor(message: string) { super('NEAR_EQUATOR', message); this.name = 'EquatorialDomainError'; }
}

/** The omega equation needs at least one interior level between the Dirichlet top and bottom. */
export class TooFewLevelsError extends QgInputError {
  constructor(message: string) { super('TOO_FEW_LEVELS', message); this.name = 'TooFewLevelsError'; }
}

/** Too many (or non-isolated) missing values in an input field. */
export class MissingValuesError extends QgInputError {
  constructor(message: string) { super('MISSING_VALUES', message); this.name = 'MissingValuesError'; }
}

/** Axes the solver cannot use (irregular spacing, unsorted, a pole inside, too few points). */
export class GridError extends QgInputError {
  constructor(message: string) { super('BAD_GRID', message); this.name = 'GridError'; }
}

/** A field whose length does not match the axes. */
export class FieldShapeError extends QgInputError {
  constructor(message: string) { super('BAD_SHAPE', message); this.name = 'FieldShapeError'; }
}
