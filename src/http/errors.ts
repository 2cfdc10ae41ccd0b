/**
 * The single error handler: every failure leaves as application/problem+json. Known errors of
 * the domain map to their problem type here; anything unexpected is logged and answered as
 * `internal` without internals in the body.
 */
import type { FastifyError, FastifyInstance, FastifyReply, FastifyRequest } from 'fastify';
import { MalformedBodyError } from '../ingest/parse.js';
import {
  EmptyUploadError,
  IdempotencyConflictError,
  RowsRejectedError,
  TooManyRowsError,
  UploadTooLargeError,
} from '../ingest/service.js';
import { Problem } from './problems.js';

export function toProblem(error: unknown): Problem {
  if (error instanceof Problem) return error;
  if (error instanceof RowsRejectedError) {
    return new Problem('invalid-rows', error.message, {
      rejected_count: error.rejectedCount,
      row_count: error.rowCount,
      errors: error.problems.map((problem) => ({
        row: problem.row,
        line: problem.line,
        column: problem.column,
        value: problem.value,
        reason: problem.reason,
      })),
    });
  }
  if (error instanceof MalformedBodyError) {
    return new Problem('malformed-body', error.line === null ? error.message : `line ${error.line}: ${error.message}`, {
      errors: [{ row: null, line: error.line, column: null, value: null, reason: error.message }],
    });
  }
  if (error instanceof UploadTooLargeError) return new Problem('payload-too-large', error.message, { limit_bytes: error.limitBytes });
  if (error instanceof TooManyRowsError) return new Problem('payload-too-large', error.message, { limit_rows: error.limitRows });
  if (error instanceof EmptyUploadError) return new Problem('malformed-body', error.message);
  if (error instanceof IdempotencyConflictError) return new Problem('conflict', error.message);
  if (isTextTheDatabaseCannotStore(error)) {
    return new Problem('invalid-request', 'the request holds text the database cannot store or compare (such as a NUL character, \\u0000)');
  }
  const fastifyError = error as Partial<FastifyError> & { validation?: unknown[] };
  if (fastifyError.validation) {
    return new Problem('invalid-request', fastifyError.message ?? 'the request is not valid', {
      errors: (fastifyError.validation as Array<{ instancePath?: string; message?: string; params?: Record<string, unknown> }>).map((issue) => ({
        field: `${fastifyError.validationContext ?? 'request'}${issue.instancePath ?? ''}`,
        reason: issue.message ?? 'is not valid',
        ...(issue.params && 'missingProperty' in issue.params ? { missing: issue.params['missingProperty'] } : {}),
        ...(issue.params && 'additionalProperty' in issue.params ? { unexpected: issue.params['additionalProperty'] } : {}),
      })),
    });
  }
  switch (fastifyError.code) {
    case 'FST_ERR_CTP_BODY_TOO_LARGE':
      return new Problem('payload-too-large', 'the request body is larger than the limit');
    case 'FST_ERR_CTP_INVALID_MEDIA_TYPE':
      return new Problem('unsupported-media-type', fastifyError.message ?? 'unsupported content type');
    case 'FST_ERR_CTP_EMPTY_JSON_BODY':
    case 'FST_ERR_CTP_INVALID_JSON_BODY':
      return new Problem('malformed-body', fastifyError.message ?? 'the body is not valid JSON');
  }
  if (fastifyError.statusCode === 400 && error instanceof SyntaxError) return new Problem('malformed-body', `the body is not valid JSON: ${error.message}`);
  if (typeof fastifyError.statusCode === 'number' && fastifyError.statusCode >= 400 && fastifyError.statusCode < 500) {
    return new Problem(fastifyError.statusCode === 413 ? 'payload-too-large' : 'invalid-request', fastifyError.message ?? 'the request is not valid');
  }
  return new Problem('internal', 'an unexpected error occurred; it has been logged');
}

/**
 * PostgreSQL refuses NUL in text parameters (SQLSTATE 22021, character_not_in_repertoire; 22P05
 * for a character its encoding lacks) where SQLite takes them. Such text can only have come from
 * the request, so it is the client's error, not the server's; this is the net under any route
 * that does not refuse control characters itself.
 */
function isTextTheDatabaseCannotStore(error: unknown): boolean {
  const code = (error as { code?: unknown } | null)?.code;
  return code === '22021' || code === '22P05';
}

export function sendProblem(reply: FastifyReply, request: FastifyRequest, problem: Problem): FastifyReply {
  for (const [name, value] of Object.entries(problem.headers)) reply.header(name, value);
  // Problem details keep one shape everywhere. A route's response schema for the same status
  // describes its own body (/healthz declares a health body for 503) and would reject a problem
  // there, turning a 503 under load into a 500; plain JSON serialization keeps every field.
  return reply.code(problem.status).type('application/problem+json').serializer(JSON.stringify).send(problem.toBody(request.url));
}

export function registerErrorHandling(app: FastifyInstance): void {
  app.setErrorHandler((error, request, reply) => {
    const problem = toProblem(error);
    if (problem.status >= 500) request.log.error({ err: error }, 'request failed');
    else request.log.info({ problem: problem.slug, detail: problem.detail }, 'request refused');
    return sendProblem(reply, request, problem);
  });
  app.setNotFoundHandler((request, reply) => sendProblem(reply, request, new Problem('not-found', `no route for ${request.method} ${request.url.split('?')[0]}`)));
}
