/**
 * Logging: pino, JSON lines by default and readable colour output only on a terminal.
 * Secrets never reach a log line: authorization headers and key material are redacted by
 * field, and any API key written elsewhere in a line (a URL's query or path) by its shape.
 */
import { createHmac, randomBytes } from 'node:crypto';
import pino from 'pino';
import type { FastifyBaseLogger } from 'fastify';
import { redactKeys } from './auth/redact.js';
import type { LogLevel } from './config.js';

/** What the code needs of a logger; both pino loggers and fastify's request loggers fit. */
export type Logger = FastifyBaseLogger;

export const REDACTED_PATHS = [
  'req.headers.authorization',
  'req.headers.cookie',
  'headers.authorization',
  'authorization',
  'apiKey',
  'key',
  'token',
];

// Drawn at start-up and never stored or logged: without it a pseudonym cannot be confirmed
// by hashing candidate ids, and pseudonyms do not link across restarts.
const PSEUDONYM_KEY = randomBytes(32);

/**
 * A keyed hash (HMAC-SHA-256, first 16 hex digits) standing in for a customer id in log lines:
 * lines about the same customer can be matched within one run of the service, the id itself
 * is never written.
 */
export function logPseudonym(id: string): string {
  return createHmac('sha256', PSEUDONYM_KEY).update(id, 'utf8').digest('hex').slice(0, 16);
}

const CUSTOMER_PATH = /^(\/v1\/customers\/)([^/?#]+)/;

/** A request path with the customer id of `/v1/customers/{id}` replaced by its pseudonym. */
function pathForLog(url: string): string {
  return url.replace(CUSTOMER_PATH, (_match, prefix: string, id: string) => {
    let decoded = id;
    try {
      decoded = decodeURIComponent(id);
    } catch {
      // a malformed escape names no customer; its raw text is hashed
    }
    return `${prefix}~${logPseudonym(decoded)}`;
  });
}

/** The request as a log line shows it: fastify's usual fields, the path without customer ids. */
export function requestForLog(request: { method?: string; url?: string; host?: string; ip?: string; socket?: { remotePort?: number } }): object {
  return { method: request.method, url: pathForLog(request.url ?? ''), host: request.host, remoteAddress: request.ip, remotePort: request.socket?.remotePort };
}

export interface LoggerOptions {
  /** Readable colour output instead of JSON lines; by default only on a terminal. */
  pretty?: boolean;
  /** Where JSON lines go; standard output by default (tests pass a stream to read them). */
  destination?: pino.DestinationStream;
}

export function createLogger(level: LogLevel, options: LoggerOptions = {}): pino.Logger {
  const pretty = options.destination === undefined && (options.pretty ?? process.stdout.isTTY === true);
  const settings: pino.LoggerOptions = {
    level,
    redact: { paths: REDACTED_PATHS, censor: '[redacted]' },
    // Every line passes here as text just before it is written, whatever logged it.
    hooks: { streamWrite: redactKeys },
    serializers: { req: requestForLog },
    ...(pretty ? { transport: { target: 'pino-pretty', options: { translateTime: 'SYS:standard', ignore: 'pid,hostname' } } } : {}),
  };
  return options.destination === undefined ? pino(settings) : pino(settings, options.destination);
}
