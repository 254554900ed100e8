import type { ErrorRequestHandler, RequestHandler } from 'express';
import { ZodError } from 'zod';

/** An error the API reports as is: status, a stable machine code and a message meant for people. */
export class HttpError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: unknown,
    readonly headers?: Record<string, string>,
  ) {
    super(message);
  }
}

export const notFound = (what = 'Resource'): HttpError => new HttpError(404, 'not_found', `${what} not found.`);
export const forbidden = (message = 'You do not have permission for this.'): HttpError =>
  new HttpError(403, 'forbidden', message);

export const unknownApiRoute: RequestHandler = (req, _res, next) => {
  next(new HttpError(404, 'no_such_route', `No API route ${req.method} ${req.path}.`));
};

/**
 * PostgreSQL cannot store the character U+0000 in text (22021, "invalid byte sequence for encoding UTF8: 0x00") or in
 * jsonb (22P05, "unsupported Unicode escape sequence"), whichever field or query parameter carried it. That is the
 * client's input, not a server failure. Drivers and drizzle wrap the database error, so the chain of causes is read.
 */
function nulRefused(err: unknown): boolean {
  for (let x: unknown = err; x && typeof x === 'object'; x = (x as { cause?: unknown }).cause) {
    const code = (x as { code?: unknown }).code;
    if (code === '22021' || code === '22P05') return true;
  }
  return false;
}

function zodDetails(err: ZodError) {
  return err.issues.map((i) => ({ path: i.path.join('.'), message: i.message, code: i.code }));
}

/** Maps every failure to {error: {code, message, details?}}; never sends a stack trace. */
export function errorHandler(log: (msg: string, err: unknown) => void): ErrorRequestHandler {
  return (err, _req, res, _next) => {
    if (res.headersSent) return;
    let status = 500;
    let body: { code: string; message: string; details?: unknown };
    if (err instanceof HttpError) {
      status = err.status;
      body = { code: err.code, message: err.message, details: err.details };
      if (err.headers) for (const [k, v] of Object.entries(err.headers)) res.setHeader(k, v);
    } else if (err instanceof ZodError) {
      status = 400;
      body = { code: 'invalid_input', message: 'The request did not pass validation.', details: zodDetails(err) };
    } else if (err && typeof err === 'object' && 'type' in err && err.type === 'entity.parse.failed') {
      status = 400;
      body = { code: 'malformed_json', message: 'The request body is not valid JSON.' };
    } else if (err && typeof err === 'object' && 'type' in err && err.type === 'entity.too.large') {
      status = 413;
      body = { code: 'too_large', message: 'The request body is larger than this server accepts.' };
    } else if (nulRefused(err)) {
      status = 400;
      body = { code: 'invalid_text', message: 'Text cannot contain the NUL character (U+0000).' };
    } else if (err && typeof err === 'object' && 'status' in err && typeof err.status === 'number' && err.status < 500) {
      status = err.status;
      body = { code: 'bad_request', message: 'The request could not be understood.' };
    } else {
      log('unhandled error', err);
      body = { code: 'internal', message: 'Something went wrong on the server. The request was not completed.' };
    }
    if (body.details === undefined) delete body.details;
    res.status(status).json({ error: body });
  };
}
