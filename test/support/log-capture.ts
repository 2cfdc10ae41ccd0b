/** A logger whose JSON lines are kept in memory, for tests of what the service logs and at which level. */
import pino from 'pino';
import type { Logger } from '../../src/logger.js';

export interface LogLine {
  level: number;
  msg: string;
  [field: string]: unknown;
}

export interface LogCapture {
  logger: Logger;
  lines: LogLine[];
  /** The first line with this message, waiting for it up to `timeoutMs`. */
  waitFor(message: string, timeoutMs?: number): Promise<LogLine>;
}

/** pino's numeric levels. */
export const LEVELS = { debug: 20, info: 30, warn: 40, error: 50 } as const;

export function captureLogs(level: pino.Level = 'debug'): LogCapture {
  const lines: LogLine[] = [];
  const logger = pino({ level }, { write: (text: string) => void lines.push(JSON.parse(text) as LogLine) });
  const waitFor = async (message: string, timeoutMs = 10_000): Promise<LogLine> => {
    const deadline = Date.now() + timeoutMs;
    for (;;) {
      const found = lines.find((line) => line.msg === message);
      if (found) return found;
      if (Date.now() > deadline) throw new Error(`no log line "${message}" within ${timeoutMs} ms`);
      await new Promise((resolve) => setTimeout(resolve, 2));
    }
  };
  return { logger, lines, waitFor };
}
