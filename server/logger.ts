import pino from 'pino';

/**
 * Structured JSON logging, one object per line (`level`, `time` in ms since the epoch, the fields
 * logged). Requests are logged by server/http/request-log.ts without headers. Cookies,
 * authorization headers, passwords and tokens are still redacted wherever they appear in a logged
 * object. `destination` (default stdout) lets tests capture the
 * lines and check that no secret is written.
 */
export function createLogger(level: string, destination?: pino.DestinationStream) {
  const options: pino.LoggerOptions = {
    level,
    // No pid and hostname on every line: one process per server, and the lines stay short.
    base: null,
    redact: {
      paths: [
        'req.headers.cookie',
        'req.headers.authorization',
        'res.headers["set-cookie"]',
        // Top level, one and two levels down (pino paths match exact depths).
        ...['password', 'token', 'newPassword', 'currentPassword', 'cookie', 'authorization'].flatMap((k) => [k, `*.${k}`, `*.*.${k}`]),
      ],
      censor: '[redacted]',
    },
  };
  return destination ? pino(options, destination) : pino(options);
}

/** The app's logger type. */
export type Logger = ReturnType<typeof createLogger>;
