/** Known failures, each with its HTTP status and a stable code clients can branch on. */
export class HttpError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly fields?: Record<string, string[]>,
  ) {
    super(message);
    this.name = new.target.name;
  }
}

export class UnauthenticatedError extends HttpError {
  constructor(message = 'Sign in to continue.') {
    super(401, 'unauthenticated', message);
  }
}

export class ForbiddenError extends HttpError {
  constructor(message = 'Your role does not allow this.') {
    super(403, 'forbidden', message);
  }
}

export class NotFoundError extends HttpError {
  constructor(what = 'Resource') {
    super(404, 'not_found', `${what} not found.`);
  }
}

export class ConflictError extends HttpError {
  constructor(message: string) {
    super(409, 'conflict', message);
  }
}

export class PayloadTooLargeError extends HttpError {
  constructor(limitBytes: number) {
    super(413, 'payload_too_large', `The body is larger than the limit of ${Math.round(limitBytes / 1024 / 1024)} MB.`);
  }
}

export class UnsupportedMediaTypeError extends HttpError {
  constructor(expected: string) {
    super(415, 'unsupported_media_type', `Send the body as ${expected}.`);
  }
}

export class UnprocessableError extends HttpError {
  constructor(message: string, fields?: Record<string, string[]>) {
    super(422, 'unprocessable', message, fields);
  }
}

export class ServiceUnavailableError extends HttpError {
  constructor(message = 'The database is busy; try again in a moment.') {
    super(503, 'unavailable', message);
  }
}
