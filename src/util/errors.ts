/**
 * Errors meant for the user: printed as one line (`slabbench: <message>`) with no stack trace.
 * Anything else that escapes to the CLI is a bug and exits with code 3.
 */

/** Exit codes, documented in README ("Exit codes"). */
export const EXIT = {
  ok: 0,
  /** A solve did not converge, or `check` found a regression. */
  failed: 1,
  /** Bad input: unreadable or malformed file, bad option, invalid suite. */
  badInput: 2,
  /** Internal error (a bug in slabbench). */
  internal: 3,
  /** Interrupted (Ctrl-C); finished results are kept. */
  interrupted: 130,
} as const;

export class UserError extends Error {
  readonly exitCode: number;
  constructor(message: string, exitCode: number = EXIT.badInput) {
    super(message);
    this.name = 'UserError';
    this.exitCode = exitCode;
  }
}

/** Error in an input file, with a 1-based line number when known. */
export function fileError(file: string, line: number | undefined, what: string): UserError {
  return new UserError(line === undefined ? `${file}: ${what}` : `${file}:${line}: ${what}`);
}

/** Error in a command-line option. */
export function optionError(option: string, what: string): UserError {
  return new UserError(`option ${option}: ${what}`);
}

/**
 * `prefix: message`, unless the message already starts with that prefix (or with the bare name
 * before a "." or " " in the prefix: "ilu0.apply" and "ilu0 setup" do not double "ilu0: …").
 */
export function withPrefix(prefix: string, message: string): string {
  const name = prefix.split(/[. ]/)[0];
  if (message.startsWith(`${prefix}:`) || message.startsWith(`${name}:`)) return message;
  return `${prefix}: ${message}`;
}
