/**
 * Logging: pino, JSON lines by default and readable colour output only on a terminal.
 * Secrets never reach a log line: authorization headers and key material are redacted by
 * field, and any API key written elsewhere in a line (a URL's query or path) by its shape.
 */
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
    ...(pretty ? { transport: { target: 'pino-pretty', options: { translateTime: 'SYS:standard', ignore: 'pid,hostname' } } } : {}),
  };
  return options.destination === undefined ? pino(settings) : pino(settings, options.destination);
}
