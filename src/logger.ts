/**
 * Logging: pino, JSON lines by default and readable colour output only on a terminal.
 * Secrets never reach a log line: authorization headers and key material are redacted.
 */
import pino from 'pino';
import type { FastifyBaseLogger } from 'fastify';
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

export function createLogger(level: LogLevel, options: { pretty?: boolean } = {}): pino.Logger {
  const pretty = options.pretty ?? process.stdout.isTTY === true;
  return pino({
    level,
    redact: { paths: REDACTED_PATHS, censor: '[redacted]' },
    ...(pretty ? { transport: { target: 'pino-pretty', options: { translateTime: 'SYS:standard', ignore: 'pid,hostname' } } } : {}),
  });
}
