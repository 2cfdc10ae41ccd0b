/**
 * The single place where errors become problem details: every failure leaves as
 * application/problem+json. Known errors of the domain are recognised by their class, errors of
 * the framework by their code; anything unexpected is logged and answered as `internal`
 * without internals in the body.
 */
import type { FastifyError, FastifyInstance, FastifyReply, FastifyRequest } from 'fastify';
import { redactKeys } from '../auth/redact.js';
import { InvalidColumnsError } from '../ingest/header-check.js';
import { MalformedBodyError } from '../ingest/parse.js';
import {
  BodyIdleTimeoutError,
  ClientAbortedError,
  EmptyUploadError,
  IdempotencyConflictError,
  RowsRejectedError,
  TooManyRowsError,
  UploadTooLargeError,
} from '../ingest/service.js';
import { InvalidDefinitionError } from '../report/definition/index.js';
import { ReportNotFoundError, SnapshotBuildFailedError, SnapshotNotFoundError, SpendBeyondLimitError, TooManyLabelsError } from '../report/snapshot/index.js';
import { Problem } from './problems.js';

/**
 * Most problems listed in one error body, as uploads do with rows: a 1 MB definition with
 * 30,000 bad entries once got a 6.2 MB answer. `error_count` says how many there were.
 */
const MAX_LISTED_ERRORS = 100;

function listed<Entry>(entries: readonly Entry[]): { error_count: number; errors: Entry[] } {
  return { error_count: entries.length, errors: entries.slice(0, MAX_LISTED_ERRORS) };
}

function toProblem(error: unknown): Problem {
  return domainProblem(error) ?? frameworkProblem(error) ?? new Problem('internal', 'an unexpected error occurred; it has been logged');
}

/** Errors the service's own modules throw, by class; null for any other error. */
function domainProblem(error: unknown): Problem | null {
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
  if (error instanceof InvalidColumnsError) {
    return new Problem('invalid-columns', `line ${error.line}: ${error.message}`, {
      errors: error.issues.map((issue) => ({ row: null, line: error.line, column: issue.column, value: null, reason: issue.reason, suggestion: issue.suggestion })),
    });
  }
  if (error instanceof MalformedBodyError) {
    return new Problem('malformed-body', error.line === null ? error.message : `line ${error.line}: ${error.message}`, {
      errors: [{ row: null, line: error.line, column: null, value: null, reason: error.message }],
    });
  }
  // The rest of such a body is never read, so the connection cannot carry another request.
  if (error instanceof UploadTooLargeError) return new Problem('payload-too-large', error.message, { limit_bytes: error.limitBytes }, { connection: 'close' });
  if (error instanceof BodyIdleTimeoutError) return new Problem('request-timeout', error.message, {}, { connection: 'close' });
  if (error instanceof ClientAbortedError) return new Problem('malformed-body', error.message, {}, { connection: 'close' });
  if (error instanceof TooManyRowsError) return new Problem('payload-too-large', error.message, { limit_rows: error.limitRows });
  if (error instanceof EmptyUploadError) return new Problem('malformed-body', error.message);
  if (error instanceof IdempotencyConflictError) return new Problem('conflict', error.message);
  if (error instanceof InvalidDefinitionError) {
    const first = error.issues[0];
    const detail =
      error.issues.length === 1 && first
        ? `${first.field}: ${first.reason}`
        : `the report definition has ${error.issues.length} problems; see errors${error.issues.length > MAX_LISTED_ERRORS ? ` (the first ${MAX_LISTED_ERRORS})` : ''}`;
    return new Problem('invalid-request', detail, listed(error.issues.map((issue) => ({ field: issue.field, reason: issue.reason }))));
  }
  if (error instanceof ReportNotFoundError) return new Problem('not-found', error.message);
  if (error instanceof TooManyLabelsError) {
    return new Problem('too-many-labels', error.message, { dimensions: error.dimensions.map(({ dimension, labels }) => ({ dimension, labels })), limit: error.limit });
  }
  if (error instanceof SpendBeyondLimitError) {
    return new Problem('spend-too-large', error.message, { sales_from: error.window.from, sales_to: error.window.to, customers: error.customers });
  }
  if (error instanceof SnapshotNotFoundError) {
    const { reportId, snapshotId } = error;
    return new Problem(
      'not-found',
      snapshotId === 'latest' ? `report ${reportId} has no snapshot yet; POST /v1/reports/${reportId}/refresh computes one` : `report ${reportId} has no snapshot ${snapshotId}`,
    );
  }
  // Still a 500 (and logged as one), with a detail that tells the client a retry is reasonable.
  if (error instanceof SnapshotBuildFailedError) return new Problem('internal', 'the snapshot could not be built and nothing was stored; the refresh may be tried again');
  if (isTextTheDatabaseCannotStore(error)) {
    return new Problem('invalid-request', 'the request holds text the database cannot store or compare (such as a NUL character, \\u0000)');
  }
  return null;
}

/** Errors fastify raises while reading a request, by their validation result, code or status; null for any other error. */
function frameworkProblem(error: unknown): Problem | null {
  const fastifyError = error as Partial<FastifyError> & { validation?: unknown[] };
  if (fastifyError.validation) {
    const issues = fastifyError.validation as Array<{ instancePath?: string; message?: string; params?: Record<string, unknown> }>;
    // ajv says "must be equal to one of the allowed values" without naming them; the client needs them.
    const allowedOf = (issue: (typeof issues)[number]) => {
      const allowed = issue.params?.['allowedValues'];
      return Array.isArray(allowed) ? `: ${allowed.map(String).join(', ')}` : '';
    };
    const [first] = issues;
    const detail = `${fastifyError.message ?? 'the request is not valid'}${issues.length === 1 && first ? allowedOf(first) : ''}`;
    return new Problem('invalid-request', detail, {
      error_count: issues.length,
      errors: issues.slice(0, MAX_LISTED_ERRORS).map((issue) => ({
        field: `${fastifyError.validationContext ?? 'request'}${issue.instancePath ?? ''}`,
        reason: `${issue.message ?? 'is not valid'}${allowedOf(issue)}`,
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
  return null;
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
  // A key a client put into the URL (refused, but still part of it) is not echoed back.
  const body = problem.toBody(redactKeys(request.url));
  body.detail = redactKeys(body.detail);
  return reply.code(problem.status).type('application/problem+json').serializer(JSON.stringify).send(body);
}

/**
 * Errors the router raises before any route runs (a malformed URL, an overlong parameter);
 * given to fastify as `frameworkErrors`, since they never reach the error handler.
 */
export function answerRouterError(error: FastifyError, request: FastifyRequest, reply: FastifyReply): void {
  sendProblem(reply, request, new Problem('invalid-request', `the request URL cannot be read: ${error.message}`));
}

const DISCONNECT_CODES = new Set(['ECONNRESET', 'ECONNABORTED', 'EPIPE', 'ERR_STREAM_PREMATURE_CLOSE']);

/**
 * The client went away mid-request: nothing is wrong with the service, and nobody is left to
 * read the answer. A reset elsewhere (a database connection) counts only while this request's
 * own connection is gone too.
 */
function isClientDisconnect(error: unknown, request: FastifyRequest): boolean {
  if (error instanceof ClientAbortedError) return true;
  const code = (error as { code?: unknown } | null)?.code;
  return typeof code === 'string' && DISCONNECT_CODES.has(code) && (request.raw.destroyed || request.raw.socket.destroyed);
}

export function registerErrorHandling(app: FastifyInstance): void {
  app.setErrorHandler((error, request, reply) => {
    if (isClientDisconnect(error, request)) {
      request.log.info({ reason: error instanceof Error ? error.message : String(error) }, 'client disconnected');
      return sendProblem(reply, request, new Problem('malformed-body', 'the client closed the connection before the request ended', {}, { connection: 'close' }));
    }
    const problem = toProblem(error);
    if (problem.status >= 500) request.log.error({ err: error }, 'request failed');
    else request.log.info({ problem: problem.slug, detail: problem.detail }, 'request refused');
    return sendProblem(reply, request, problem);
  });
  app.setNotFoundHandler((request, reply) => sendProblem(reply, request, new Problem('not-found', `no route for ${request.method} ${request.url.split('?')[0]}`)));
}
