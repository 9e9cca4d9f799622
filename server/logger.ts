import pino from 'pino';

/**
 * Structured JSON logging. Cookies, authorization headers, passwords and tokens are redacted
 * wherever they appear in a logged object.
 */
export function createLogger(level: string) {
  return pino({
    level,
    redact: {
      paths: [
        'req.headers.cookie',
        'req.headers.authorization',
        'res.headers["set-cookie"]',
        '*.password',
        '*.token',
        '*.newPassword',
        '*.currentPassword',
      ],
      censor: '[redacted]',
    },
  });
}

/** The app's logger type. */
export type Logger = ReturnType<typeof createLogger>;
