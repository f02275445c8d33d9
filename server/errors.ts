/**
 * Typed errors with an HTTP status. Services throw these; the one error middleware in app.ts
 * turns them into `{ error: { code, message, details? } }` answers.
 */
export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
    this.name = 'AppError';
  }
}

export const badRequest = (message: string, details?: unknown) => new AppError(400, 'bad_request', message, details);
export const unauthorized = (message = 'Sign in first.') => new AppError(401, 'unauthorized', message);
export const forbidden = (message = 'Your roles do not allow this.') => new AppError(403, 'forbidden', message);
export const notFound = (message = 'Not found.') => new AppError(404, 'not_found', message);
export const conflict = (message: string, details?: unknown) => new AppError(409, 'conflict', message, details);
export const unprocessable = (message: string, details?: unknown) => new AppError(422, 'unprocessable', message, details);
export const serviceUnavailable = (message: string) => new AppError(503, 'unavailable', message);
